//! The recovery benchmark: simulated ground truth on the template, fitted by
//! the patch pipeline and by minimum norm, with the metrics of
//! docs/validation.md (localisation error of the strongest patch, region
//! top-1 accuracy, area under the ROC curve of the source map); and the
//! boundary-element head against the exact sphere series (`head_accuracy`).

mod head_accuracy;
mod metrics;
mod recovery;

pub use head_accuracy::{
    comparison_electrodes, concentric_bem, rdm_mag, sphere_accuracy, AccuracyRow,
};
pub use metrics::{median, region_top1, roc_auc};
pub use recovery::{
    run_case, CaseResult, CaseSpec, Method, RecoveryFixture, RecoverySetup, SimHead,
};
