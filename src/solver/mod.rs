//! Pipeline stage `solver`: the group-LASSO fit of patterns on a dictionary.
//!
//! Minimise over X (n_atoms x k): ½‖Y − DX‖_F² + λ Σ_g ‖X_g‖_F, with D the
//! dictionary (n_ch x n_atoms), groups partitioning the atoms and X_g the rows
//! of group g across all k columns (so a joint fit shares one support).
//! λ_max = max_g ‖D_gᵀY‖_F gives X = 0. With one atom per group this is
//! scikit-learn's MultiTaskLasso with alpha = λ / n_ch.
//!
//! # Algorithm
//! FISTA (Beck & Teboulle 2009, SIAM J Imaging Sci 2:183) with gradient-based
//! adaptive restart (O'Donoghue & Candès 2015, Found Comput Math 15:715),
//! step 1/L with L from power iteration on the working set's DᵀD (×1.02,
//! capped by ‖D‖_F²), block soft-thresholding prox, the duality gap of the
//! full problem relative to ½‖Y‖_F² as stopping rule, Gap Safe screening
//! (Ndiaye, Fercoq, Gramfort & Salmon 2017, JMLR 18(128)) with the spectral
//! norm of each group, and growing working sets.
//!
//! # Layouts
//! Y is row-major n_ch x k (`/patterns/values`); coefficients are row-major
//! n_atoms x k (`/fit/coefficients`); the residual is row-major n_ch x k.
//!
//! # Example
//! ```
//! use patchwise::solver::{fit, DenseDictionary, Groups, Lambda, NoObserver, Params};
//! // Two orthonormal atoms on two channels, one group each.
//! let dict = DenseDictionary::from_row_major(2, 2, &[1.0, 0.0, 0.0, 1.0]).unwrap();
//! let groups = Groups::singletons(2).unwrap();
//! let params = Params { lambda: Lambda::Absolute(1.0), ..Params::default() }.validate().unwrap();
//! let (fit, info) = fit(&dict, &groups, &[3.0, 0.5], 1, &params, &mut NoObserver).unwrap();
//! // Soft-thresholding: max(0, |y| − λ) sign(y).
//! assert!((fit.coefficients[0] - 2.0).abs() < 1e-6);
//! assert_eq!(fit.coefficients[1], 0.0);
//! assert!(info.duality_gap <= 1e-8);
//! ```

mod block;
mod certificate;
mod error;
mod fista;
mod fit;
mod groups;
pub(crate) mod kernels;
mod observer;
mod operator;
mod outer;
mod params;
mod path;
mod problem;
mod refit;

pub use block::{fit_warm_block, BlockFits, BlockProblem};
pub use error::SolverError;
pub use fit::{fit, fit_separately, fit_warm, Fit};
pub use groups::Groups;
pub use observer::{NoObserver, Observer, Recorder};
pub use operator::{DenseDictionary, LinearOperator};
pub use params::{Info, Lambda, Params, StopReason, ValidParams};
pub use path::{path, PathPoint, PathSpec, SparseRows};
pub use problem::null_lambda_max;
pub use refit::{refit, Refit};
