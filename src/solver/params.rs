//! Solver parameters, their validation, and the run report.

use super::error::SolverError;

/// How the penalty weight λ is given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Lambda {
    /// λ = r · λ_max with 0 < r ≤ 1 (`--lambda-ratio`).
    Ratio(f64),
    /// λ itself, finite and > 0 (`--lambda`).
    Absolute(f64),
}

impl Lambda {
    /// Checks the range of the value.
    pub fn validate(self) -> Result<Self, SolverError> {
        match self {
            Lambda::Ratio(r) if r.is_finite() && r > 0.0 && r <= 1.0 => Ok(self),
            Lambda::Ratio(r) => Err(SolverError::InvalidParameter {
                name: "lambda ratio",
                value: r,
                expected: "0 < ratio <= 1",
            }),
            Lambda::Absolute(l) if l.is_finite() && l > 0.0 => Ok(self),
            Lambda::Absolute(l) => Err(SolverError::InvalidParameter {
                name: "lambda",
                value: l,
                expected: "finite and > 0",
            }),
        }
    }

    /// λ for a problem with the given λ_max.
    pub fn resolve(self, lambda_max: f64) -> f64 {
        match self {
            Lambda::Ratio(r) => r * lambda_max,
            Lambda::Absolute(l) => l,
        }
    }
}

/// Raw solver parameters, as a user or a job file gives them.
#[derive(Debug, Clone, PartialEq)]
pub struct Params {
    /// Penalty weight.
    pub lambda: Lambda,
    /// Stop when the duality gap relative to ½‖Y‖_F² is at most this (> 0).
    pub tol: f64,
    /// Most FISTA iterations in one fit (all working sets together), ≥ 1.
    pub max_iter: usize,
    /// Discard groups by the Gap Safe rule (Ndiaye et al. 2017).
    pub screening: bool,
    /// Solve on a growing working set of groups; `false` solves on all
    /// unscreened groups at once.
    pub working_set: bool,
    /// Groups in the first working set (≥ 1; doubled each outer pass).
    pub initial_working_set: usize,
    /// Wall-clock budget of one fit in seconds (finite and > 0), or none.
    /// Checked between FISTA iterations; a fit stopped by it depends on the
    /// machine's speed, which [`StopReason::TimeBudget`] says.
    pub max_seconds: Option<f64>,
    /// On reaching `max_iter` or `max_seconds`, return the iterate with its
    /// duality gap and [`StopReason::IterationBudget`] or
    /// [`StopReason::TimeBudget`] instead of [`SolverError::NotConverged`].
    pub stop_on_budget: bool,
}

impl Default for Params {
    fn default() -> Self {
        Self {
            lambda: Lambda::Ratio(0.1),
            tol: 1e-8,
            max_iter: 100_000,
            screening: true,
            working_set: true,
            initial_working_set: 16,
            max_seconds: None,
            stop_on_budget: false,
        }
    }
}

/// Parameters that passed [`Params::validate`]; only these reach the solver.
#[derive(Debug, Clone, PartialEq)]
pub struct ValidParams {
    pub(crate) lambda: Lambda,
    pub(crate) tol: f64,
    pub(crate) max_iter: usize,
    pub(crate) screening: bool,
    pub(crate) working_set: bool,
    pub(crate) initial_working_set: usize,
    pub(crate) max_seconds: Option<f64>,
    pub(crate) stop_on_budget: bool,
}

impl ValidParams {
    /// The validated penalty weight.
    pub fn lambda(&self) -> Lambda {
        self.lambda
    }

    /// The same parameters with another λ (already validated).
    pub fn with_lambda(&self, lambda: Lambda) -> Result<Self, SolverError> {
        Ok(Self {
            lambda: lambda.validate()?,
            ..self.clone()
        })
    }
}

impl Params {
    /// Checks every field: λ in range, `tol > 0` finite, `max_iter ≥ 1`,
    /// `initial_working_set ≥ 1`, `max_seconds` finite and > 0 when given.
    pub fn validate(&self) -> Result<ValidParams, SolverError> {
        let lambda = self.lambda.validate()?;
        if !(self.tol.is_finite() && self.tol > 0.0) {
            return Err(SolverError::InvalidParameter {
                name: "tol",
                value: self.tol,
                expected: "finite and > 0",
            });
        }
        if self.max_iter == 0 {
            return Err(SolverError::InvalidParameter {
                name: "max_iter",
                value: 0.0,
                expected: ">= 1",
            });
        }
        if self.initial_working_set == 0 {
            return Err(SolverError::InvalidParameter {
                name: "initial_working_set",
                value: 0.0,
                expected: ">= 1",
            });
        }
        if let Some(t) = self.max_seconds {
            if !(t.is_finite() && t > 0.0) {
                return Err(SolverError::InvalidParameter {
                    name: "max_seconds",
                    value: t,
                    expected: "finite and > 0",
                });
            }
        }
        Ok(ValidParams {
            lambda,
            tol: self.tol,
            max_iter: self.max_iter,
            screening: self.screening,
            working_set: self.working_set,
            initial_working_set: self.initial_working_set,
            max_seconds: self.max_seconds,
            stop_on_budget: self.stop_on_budget,
        })
    }
}

/// Why the solver stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum StopReason {
    /// The relative duality gap reached the tolerance.
    Converged,
    /// λ ≥ λ_max: the solution is exactly zero, returned without iterating.
    ZeroSolution,
    /// `max_iter` iterations were spent before the gap reached the
    /// tolerance (only with `stop_on_budget`); `duality_gap` says how far
    /// from optimal the returned iterate is.
    IterationBudget,
    /// `max_seconds` passed before the gap reached the tolerance (only with
    /// `stop_on_budget`).
    TimeBudget,
}

impl StopReason {
    /// True when the fit stopped on a budget rather than on its certificate.
    pub fn on_budget(self) -> bool {
        matches!(self, StopReason::IterationBudget | StopReason::TimeBudget)
    }
}

/// What a fit did.
#[derive(Debug, Clone, PartialEq)]
pub struct Info {
    /// FISTA iterations, all working sets together.
    pub iterations: usize,
    /// Outer passes (full-problem certificates computed).
    pub outer_iterations: usize,
    /// Duality gap relative to ½‖Y‖_F², computed on the full problem.
    pub duality_gap: f64,
    /// Primal objective ½‖Y − DX‖_F² + λ Σ_g ‖X_g‖_F.
    pub primal: f64,
    /// Dual objective at the feasible dual point.
    pub dual: f64,
    /// The λ used.
    pub lambda: f64,
    /// λ_max = max_g ‖D_gᵀY‖_F.
    pub lambda_max: f64,
    /// Why it stopped.
    pub stop_reason: StopReason,
    /// Groups with a nonzero block X_g.
    pub n_active_groups: usize,
    /// Atoms with a nonzero row.
    pub n_active_atoms: usize,
    /// Groups discarded by Gap Safe screening at the end.
    pub n_screened_groups: usize,
    /// Groups in the last working set.
    pub working_set_size: usize,
    /// Passes over the dictionary: atoms read by every product with the
    /// dictionary or a working set's copy of it (an adjoint Dᵀ R counts
    /// each atom it computes, a forward product D X each nonzero row, a
    /// working set's Gram matrix its atoms once), divided by the number of
    /// atoms. Includes λ_max (one pass) when the fit computed it.
    pub dictionary_passes: f64,
}
