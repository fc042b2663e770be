//! The recovery benchmark: simulated ground truth on the template, fitted by
//! the patch pipeline and by minimum norm, with the metrics of
//! docs/validation.md (localisation error of the strongest patch, region
//! top-1 accuracy, area under the ROC curve of the source map).

mod metrics;
mod recovery;

pub use metrics::{median, region_top1, roc_auc};
pub use recovery::{run_case, CaseResult, CaseSpec, Method, RecoveryFixture, RecoverySetup};
