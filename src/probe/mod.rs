//! Downstream probes: a k-NN classifier, a multinomial logistic regression and a nearest-class-mean
//! (prototype) classifier.
//!
//! All are deliberately plain: their job is to measure how an augmentation moves a simple,
//! well-understood classifier, so every rule (vote, tie, loss, stopping) is fixed and documented
//! rather than tuned.

mod centroid;
mod exp_f32;
mod feature_preconditioner;
mod kind;
mod knn;
mod knn_standardize;
pub mod lbfgs;
mod linear;
mod linear_model;
mod linfa_estimators;
mod logit_adjust;
mod scaling;
mod softmax_loss;

pub use centroid::CentroidProbe;
pub use kind::ProbeKind;
pub use knn::{KnnParams, KnnProbe, Vote, inverse_class_counts};
pub use knn_standardize::KnnStandardizer;
pub use linear::{ClassWeight, LinearParams, LinearProbe, class_weights};
pub use linear_model::LinearModel;
pub use linfa_estimators::FittedKnn;
pub use logit_adjust::LogitAdjustment;
