//! The assessment: every method, on every fold, against the `none` baseline, with the same
//! splits for all (a paired design).

mod config;
mod confusion;
mod external;
mod from_file;
mod input;
mod items;
mod method_id;
mod probe_side;
pub mod results;
mod run;
mod scatter;
mod shared_knn;
mod summary;
mod sweep;
mod thin_classes;

pub use config::{
    AssessConfig, ExternalBudget, ExternalConfig, ExternalRecord, ExternalSetInfo, KnnClamp,
    ResultsConfig,
};
pub use confusion::{CHANGES_LISTED, confusions};
pub use external::{
    PARENT_KEY, RowSets, check_name as check_external_name, read as read_external,
    resolve as resolve_external,
};
pub use from_file::{FileRows, GrownFile};
pub use input::sha256_of;
pub use items::{StepPart, StepPlan, assess_step, combine_steps, step_plan};
pub use method_id::{MethodId, UNION_JOIN};
pub use probe_side::not_applicable;
pub use results::{AssessResults, HashedFile, InputInfo};
pub use run::{
    Progress, WorkItem, assess, assess_grown_observed, assess_observed, assess_sets_observed,
    assess_with, assess_with_observed,
};
pub use scatter::{MAX_CLASSES as MAX_SCATTER_CLASSES, RIVALS as SCATTER_RIVALS};
pub use summary::{LEVEL, summary_with};
pub use sweep::{Knob, SweepPoint, SweepResults, SweepValue, sweep, sweep_sets};
pub use thin_classes::check_thin_classes;
