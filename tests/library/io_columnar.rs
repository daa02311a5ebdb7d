//! Parquet and Arrow IPC (feature `columnar`): files made here with the arrow-rs writers read
//! into the values they were built from, grown sets read back with their provenance, columns
//! without a role are carried through, and malformed tables are refused with the column and
//! row. pyarrow and pandas check the same files from the other side in
//! tests/python/test_columnar.py.

use std::fs::File;
use std::path::Path;
use std::sync::Arc;

use arrow_array::types::Float32Type;
use arrow_array::{
    Array, ArrayRef, FixedSizeListArray, Float32Array, Float64Array, Int64Array, ListArray,
    RecordBatch, StringArray,
};
use arrow_schema::{DataType, Field, Schema};
use embloom::data::Dataset;
use embloom::io::{AugmentedSet, ReadOptions, read, write, write_carrying};
use ndarray::Array2;

fn strs(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

fn table(cols: Vec<(&str, ArrayRef)>) -> RecordBatch {
    let fields: Vec<Field> = cols
        .iter()
        .map(|(n, a)| Field::new(*n, a.data_type().clone(), a.null_count() > 0))
        .collect();
    let arrays = cols.into_iter().map(|(_, a)| a).collect();
    RecordBatch::try_new(Arc::new(Schema::new(fields)), arrays).unwrap()
}

fn save(path: &Path, batch: &RecordBatch) {
    let file = File::create(path).unwrap();
    if path.extension().is_some_and(|e| e == "parquet") {
        let mut w = parquet::arrow::ArrowWriter::try_new(file, batch.schema(), None).unwrap();
        w.write(batch).unwrap();
        w.close().unwrap();
    } else {
        let mut w = arrow_ipc::writer::FileWriter::try_new(file, &batch.schema()).unwrap();
        w.write(batch).unwrap();
        w.finish().unwrap();
    }
}

fn load(path: &Path) -> RecordBatch {
    let file = File::open(path).unwrap();
    let batches: Vec<RecordBatch> = if path.extension().is_some_and(|e| e == "parquet") {
        parquet::arrow::arrow_reader::ParquetRecordBatchReaderBuilder::try_new(file)
            .unwrap()
            .build()
            .unwrap()
            .map(Result::unwrap)
            .collect()
    } else {
        arrow_ipc::reader::FileReader::try_new(file, None)
            .unwrap()
            .map(Result::unwrap)
            .collect()
    };
    arrow_select::concat::concat_batches(&batches[0].schema(), &batches).unwrap()
}

/// x[i, j] = i * 0.5 - j * 0.25, exact in every float type.
fn value(i: usize, j: usize) -> f32 {
    i as f32 * 0.5 - j as f32 * 0.25
}

fn fixed_list(rows: usize, dims: usize) -> ArrayRef {
    let values =
        Float32Array::from_iter_values((0..rows).flat_map(|i| (0..dims).map(move |j| value(i, j))));
    let item = Arc::new(Field::new("item", DataType::Float32, true));
    Arc::new(FixedSizeListArray::new(
        item,
        dims as i32,
        Arc::new(values),
        None,
    ))
}

fn labels6() -> ArrayRef {
    Arc::new(StringArray::from(vec!["a", "b", "a", "a", "b", "a"]))
}

fn err(path: &Path, opts: &ReadOptions) -> String {
    read(path, opts).unwrap_err().to_string()
}

fn has(msg: &str, parts: &[&str]) {
    for p in parts {
        assert!(msg.contains(p), "'{p}' missing from: {msg}");
    }
}

#[test]
fn list_column_with_roles_reads_and_carries_the_rest() {
    // Common practice, no source: a table's columns read back as the values written.
    let dir = tempfile::tempdir().unwrap();
    for ext in ["parquet", "arrow"] {
        let p = dir.path().join(format!("t.{ext}"));
        save(
            &p,
            &table(vec![
                (
                    "id",
                    Arc::new(Int64Array::from(vec![10, 11, 12, 13, 14, 15])),
                ),
                ("embeddings", fixed_list(6, 3)),
                ("label", labels6()),
                (
                    "group",
                    Arc::new(StringArray::from(vec!["g", "g", "h", "h", "k", "k"])),
                ),
                ("fold", Arc::new(Int64Array::from(vec![0, 1, 0, 1, 0, 1]))),
                (
                    "path",
                    Arc::new(StringArray::from(vec!["p0", "p1", "p2", "p3", "p4", "p5"])),
                ),
                ("score", Arc::new(Float64Array::from(vec![0.5; 6]))),
            ]),
        );
        let l = read(&p, &ReadOptions::default()).unwrap();
        let d = &l.dataset;
        assert_eq!(d.x, Array2::from_shape_fn((6, 3), |(i, j)| value(i, j)));
        assert_eq!(d.classes, strs(&["a", "b"]));
        assert_eq!(d.labels, vec![0, 1, 0, 0, 1, 0]);
        assert_eq!(d.ids, Some(strs(&["10", "11", "12", "13", "14", "15"])));
        assert!(d.int_ids);
        assert_eq!(d.groups, Some(strs(&["g", "g", "h", "h", "k", "k"])));
        assert_eq!(d.folds, Some(vec![0, 1, 0, 1, 0, 1]));
        assert_eq!(d.stored_dtype, "f32");
        // A numeric column beside a list column is not a feature: it rides along.
        assert_eq!(l.carried.unwrap().names(), strs(&["path", "score"]));
    }
}

#[test]
fn numeric_columns_are_the_features_when_there_is_no_list() {
    // Common practice, no source: f64 columns keep their f64 values; a text column without a
    // role is carried, not refused.
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("wide.parquet");
    let col = |j: usize| -> ArrayRef {
        Arc::new(Float64Array::from_iter_values(
            (0..6).map(|i| f64::from(value(i, j)) + 1e-12),
        ))
    };
    save(
        &p,
        &table(vec![
            ("f0", col(0)),
            ("note", Arc::new(StringArray::from(vec!["x"; 6]))),
            ("f1", col(1)),
            ("label", labels6()),
        ]),
    );
    let l = read(&p, &ReadOptions::default()).unwrap();
    let d = &l.dataset;
    assert_eq!(d.dims(), 2);
    assert_eq!(d.float_type, embloom::FloatType::F64);
    let kept = d.x_f64.as_ref().unwrap();
    assert_eq!(kept[[3, 1]], f64::from(value(3, 1)) + 1e-12);
    assert_eq!(l.carried.unwrap().names(), strs(&["note"]));
}

#[test]
fn list_rows_of_different_lengths_nulls_and_wrong_types_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("bad.parquet");
    let ragged = ListArray::from_iter_primitive::<Float32Type, _, _>(vec![
        Some(vec![Some(1.0), Some(2.0)]),
        Some(vec![Some(1.0), Some(2.0)]),
        Some(vec![Some(1.0)]),
    ]);
    let three = || -> ArrayRef { Arc::new(StringArray::from(vec!["a", "b", "a"])) };
    save(
        &p,
        &table(vec![("embeddings", Arc::new(ragged)), ("label", three())]),
    );
    has(
        &err(&p, &ReadOptions::default()),
        &[
            "bad.parquet",
            "column 'embeddings', row 2",
            "1 values where row 0 has 2",
        ],
    );

    let holed = ListArray::from_iter_primitive::<Float32Type, _, _>(vec![
        Some(vec![Some(1.0), Some(2.0)]),
        Some(vec![Some(1.0), None]),
        Some(vec![Some(1.0), Some(3.0)]),
    ]);
    save(
        &p,
        &table(vec![("embeddings", Arc::new(holed)), ("label", three())]),
    );
    has(
        &err(&p, &ReadOptions::default()),
        &["column 'embeddings', row 1", "missing value"],
    );

    let no_label = StringArray::from(vec![Some("a"), None, Some("b")]);
    save(
        &p,
        &table(vec![
            ("embeddings", fixed_list(3, 2)),
            ("label", Arc::new(no_label)),
        ]),
    );
    has(
        &err(&p, &ReadOptions::default()),
        &["column 'label', row 1", "missing value"],
    );

    save(
        &p,
        &table(vec![("embeddings", fixed_list(3, 2)), ("y", three())]),
    );
    has(
        &err(&p, &ReadOptions::default()),
        &["no label column 'label'", "embeddings, y", "`label_column`"],
    );

    save(
        &p,
        &table(vec![("vecs", fixed_list(3, 2)), ("label", three())]),
    );
    has(
        &err(&p, &ReadOptions::default()),
        &[
            "no embeddings column 'embeddings'",
            "vecs",
            "`embeddings_key`",
        ],
    );
    let opts = ReadOptions {
        embeddings_key: "vecs".into(),
        ..ReadOptions::default()
    };
    assert_eq!(read(&p, &opts).unwrap().dataset.dims(), 2);

    let opts = ReadOptions {
        id_column: Some("row".into()),
        ..ReadOptions::default()
    };
    has(
        &err(&p, &opts),
        &["schema, column 'row'", "no id column 'row'"],
    );

    std::fs::write(&p, b"PAR1 not really").unwrap();
    has(
        &err(&p, &ReadOptions::default()),
        &["bad.parquet", "not a readable Parquet file"],
    );
    let a = dir.path().join("bad.arrow");
    std::fs::write(&a, b"ARROW1\0\0").unwrap();
    has(
        &err(&a, &ReadOptions::default()),
        &["bad.arrow", "not a readable Arrow IPC file"],
    );
}

/// Three real rows and two synthetic ones, as a grown set holds them.
fn grown() -> AugmentedSet {
    let x = Array2::from_shape_fn((5, 3), |(i, j)| value(i, j));
    let mut d = Dataset::new(x, vec![0, 1, 0, 0, 0], strs(&["cat", "dog"]));
    d.ids = Some(strs(&["r0", "r1", "r2", "synthetic-0", "synthetic-1"]));
    d.source_row = Some(vec![0, 2, 3, 0, 3]);
    AugmentedSet {
        data: d,
        origin: strs(&["real", "real", "real", "interpolate", "interpolate"]),
        parent: vec![0, 1, 2, 0, 2],
        partner: vec![-1, -1, -1, 2, 0],
        weight: vec![0.0, 0.0, 0.0, 0.25, 0.5],
        partner_label: None,
    }
}

#[test]
fn grown_sets_read_back_with_provenance_and_carried_columns() {
    // Common practice, no source: what the writer put in each column, read back by arrow-rs.
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("in.arrow");
    save(
        &input,
        &table(vec![
            ("embeddings", fixed_list(4, 3)),
            (
                "label",
                Arc::new(StringArray::from(vec!["cat", "x", "dog", "cat"])),
            ),
            (
                "path",
                Arc::new(StringArray::from(vec!["p0", "p1", "p2", "p3"])),
            ),
        ]),
    );
    let carried = read(&input, &ReadOptions::default()).unwrap().carried;
    for ext in ["parquet", "arrow", "feather"] {
        let out = dir.path().join(format!("out.{ext}"));
        let set = grown();
        write_carrying(&out, &set, false, carried.as_ref()).unwrap();
        let back = read(&out, &ReadOptions::default()).unwrap();
        assert_eq!(back.dataset.x, set.data.x, "{ext}");
        assert_eq!(back.dataset.ids, set.data.ids, "{ext}");
        assert_eq!(back.origin, Some(set.origin.clone()), "{ext}");
        assert_eq!(back.parent, Some(set.parent.clone()), "{ext}");
        assert_eq!(back.partner, Some(set.partner.clone()), "{ext}");
        let t = load(&out);
        let schema = t.schema();
        let names: Vec<&str> = schema.fields().iter().map(|f| f.name().as_str()).collect();
        assert_eq!(
            names,
            [
                "id",
                "label",
                "source_row",
                "embeddings",
                "origin",
                "parent",
                "partner",
                "weight",
                "path"
            ]
        );
        // Real rows take the input's value by source_row; synthetic rows have none.
        let path = t.column(8).as_any().downcast_ref::<StringArray>().unwrap();
        let got: Vec<Option<&str>> = path.iter().collect();
        assert_eq!(
            got,
            [Some("p0"), Some("p2"), Some("p3"), None, None],
            "{ext}"
        );
        let w = t.column(7).as_any().downcast_ref::<Float32Array>().unwrap();
        assert_eq!(w.values().to_vec(), set.weight, "{ext}");
        // Reading the grown file again carries the input's column, not the provenance.
        assert_eq!(back.carried.unwrap().names(), strs(&["path"]));
    }
    // Without carried columns (io::write) the table ends at the provenance.
    let out = dir.path().join("plain.parquet");
    write(&out, &grown(), false).unwrap();
    assert_eq!(load(&out).num_columns(), 8);
}

#[test]
fn float_types_round_trip() {
    // f16 and f64 go out in their own Arrow types, bf16 as float32 (exact), as npz does.
    // Common practice, no source.
    use embloom::FloatType;
    let dir = tempfile::tempdir().unwrap();
    for (ft, want, dtype) in [
        (FloatType::F16, FloatType::F16, DataType::Float16),
        (FloatType::BF16, FloatType::F32, DataType::Float32),
        (FloatType::F64, FloatType::F64, DataType::Float64),
    ] {
        let mut set = grown();
        set.data.float_type = ft;
        let out = dir.path().join(format!("{ft:?}.parquet"));
        write(&out, &set, false).unwrap();
        let back = read(&out, &ReadOptions::default()).unwrap().dataset;
        assert_eq!(back.float_type, want);
        assert_eq!(back.x, set.data.x);
        let t = load(&out);
        let DataType::FixedSizeList(item, 3) = t.schema().field(3).data_type().clone() else {
            panic!("embeddings are not a fixed-size list of 3");
        };
        assert_eq!(item.data_type(), &dtype);
    }
}
