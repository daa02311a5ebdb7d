//! Columns of a columnar input that embloom does not use (free text, a file path, a
//! timestamp): kept as the input stored them so a columnar output can carry them through
//! unchanged. Other outputs have no place for arbitrary typed columns and leave them out.

/// The unused columns of an input, in the input's own types and file row order.
#[derive(Debug, Clone, Default)]
pub struct Carried {
    #[cfg(feature = "columnar")]
    pub(crate) columns: Vec<(arrow_schema::FieldRef, arrow_array::ArrayRef)>,
}

impl Carried {
    /// The carried columns' names, in input order.
    pub fn names(&self) -> Vec<String> {
        #[cfg(feature = "columnar")]
        {
            self.columns.iter().map(|(f, _)| f.name().clone()).collect()
        }
        #[cfg(not(feature = "columnar"))]
        {
            Vec::new()
        }
    }

    /// Whether no column is carried.
    pub fn is_empty(&self) -> bool {
        self.names().is_empty()
    }
}
