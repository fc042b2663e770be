//! The outer loop: full-problem certificate, Gap Safe screening, working sets.
//!
//! Each pass computes the duality gap on the full, unscreened problem, stops
//! if it is small enough, discards groups by the Gap Safe rule, picks a
//! working set (the active groups plus the groups closest to violating their
//! dual constraint) and solves the restricted problem by FISTA. The priority
//! of group g is (1 − ‖D_gᵀθ‖_F)/‖D_g‖₂, the distance from θ to the boundary
//! of the group's constraint, smallest first (the working-set rule of Massias,
//! Gramfort & Salmon 2018, ICML "Celer", in its group form). The working set
//! at least doubles each pass, so it reaches the whole problem if it must.

use super::certificate::{Certificate, Unscreened};
use super::error::SolverError;
use super::fista::{solve_sub, SubProblem};
use super::observer::Observer;
use super::params::{Info, StopReason, ValidParams};
use super::problem::{Prepared, Targets};

/// The inner solve aims at this fraction of the current full gap.
const INNER_FRACTION: f64 = 0.01;

/// Solves the group-LASSO for one λ from the warm start `x` (row-major
/// `n_atoms x k`, overwritten with the solution). `lambda_max` must be the
/// problem's λ_max.
pub(crate) fn solve(
    prep: &Prepared,
    y: &Targets,
    lambda: f64,
    lambda_max: f64,
    params: &ValidParams,
    x: &mut [f64],
    observer: &mut dyn Observer,
) -> Result<Info, SolverError> {
    let mut state = match Outer::start(prep, y, lambda, lambda_max, params, x, observer) {
        Ok(state) => state,
        Err(info) => return Ok(info),
    };
    loop {
        state.certify(prep, y, x);
        if let Some(info) = state.advance(prep, y, params, x, observer)? {
            return Ok(info);
        }
    }
}

/// The state of [`solve`] between two full-problem certificates, so that a
/// caller can compute the certificates of many problems together
/// (`super::block`) and run the rest of each pass problem by problem.
pub(crate) struct Outer {
    pub lambda: f64,
    lambda_max: f64,
    deadline: Option<std::time::Instant>,
    pub cert: Certificate,
    pub screened: Vec<bool>,
    pub atom_kept: Vec<bool>,
    /// The groups and atoms not screened, increasing: after the first
    /// passes most groups are screened, and every per-pass scan (residual,
    /// group correlations, working set) runs over these only.
    pub unscreened_groups: Vec<usize>,
    pub kept_atoms: Vec<usize>,
    ws_size: usize,
    iterations: usize,
    outer: usize,
    last_ws: usize,
    /// Atoms read by products with the full dictionary or its restrictions.
    pub atom_reads: usize,
}

impl Outer {
    /// The state before the first certificate; `Err(info)` when λ ≥ λ_max,
    /// where X = 0 is optimal (and `x` is set to it).
    pub fn start(
        prep: &Prepared,
        y: &Targets,
        lambda: f64,
        lambda_max: f64,
        params: &ValidParams,
        x: &mut [f64],
        observer: &mut dyn Observer,
    ) -> Result<Self, Info> {
        let dict = prep.dict;
        let (n_ch, n_atoms, n_groups, k) = (
            dict.n_channels(),
            dict.n_atoms(),
            prep.groups.n_groups(),
            y.k,
        );
        observer.observe_init(
            "group_lasso",
            &[
                ("n_atoms", n_atoms as f64),
                ("n_groups", n_groups as f64),
                ("k", k as f64),
                ("lambda", lambda),
                ("lambda_max", lambda_max),
            ],
        );
        if lambda >= lambda_max {
            // X = 0 is optimal: R = Y, θ = Y/λ is feasible and primal = dual = ½‖Y‖².
            x.fill(0.0);
            observer.observe_final(&[("iterations", 0.0), ("gap", 0.0), ("n_active_groups", 0.0)]);
            return Err(Info {
                iterations: 0,
                outer_iterations: 0,
                duality_gap: 0.0,
                primal: y.half_sq,
                dual: y.half_sq,
                lambda,
                lambda_max,
                stop_reason: StopReason::ZeroSolution,
                n_active_groups: 0,
                n_active_atoms: 0,
                n_screened_groups: n_groups,
                working_set_size: 0,
                dictionary_passes: 0.0,
            });
        }
        let deadline = params
            .max_seconds
            .map(|t| std::time::Instant::now() + std::time::Duration::from_secs_f64(t));
        Ok(Self {
            lambda,
            lambda_max,
            deadline,
            cert: Certificate::new(n_ch, n_atoms, n_groups, k),
            screened: vec![false; n_groups],
            atom_kept: vec![true; n_atoms],
            unscreened_groups: (0..n_groups).collect(),
            kept_atoms: (0..n_atoms).collect(),
            ws_size: params.initial_working_set.min(n_groups),
            iterations: 0,
            outer: 0,
            last_ws: 0,
            atom_reads: 0,
        })
    }

    /// The full-problem certificate of `x`, without the screened groups.
    pub fn certify(&mut self, prep: &Prepared, y: &Targets, x: &[f64]) {
        self.atom_reads += self.certificate_reads(x, y.k);
        self.cert.compute_unscreened(
            prep.dict,
            prep.groups.n_groups(),
            |g| prep.groups.atoms(g),
            Some(Unscreened {
                groups: &self.unscreened_groups,
                atoms: &self.kept_atoms,
                atom_kept: &self.atom_kept,
            }),
            &y.cols,
            y.half_sq,
            y.k,
            self.lambda,
            x,
        );
    }

    /// Atoms a certificate of `x` reads: the forward product's nonzero rows
    /// and the adjoint's unscreened atoms (`x` is zero on screened atoms).
    pub fn certificate_reads(&self, x: &[f64], k: usize) -> usize {
        let nonzero = self
            .kept_atoms
            .iter()
            .filter(|&&j| x[j * k..(j + 1) * k].iter().any(|&v| v != 0.0))
            .count();
        nonzero + self.kept_atoms.len()
    }

    /// The rest of a pass once the certificate is computed: stop (with the
    /// fit's [`Info`]), or screen, choose a working set and solve on it.
    pub fn advance(
        &mut self,
        prep: &Prepared,
        y: &Targets,
        params: &ValidParams,
        x: &mut [f64],
        observer: &mut dyn Observer,
    ) -> Result<Option<Info>, SolverError> {
        let groups = prep.groups;
        let (n_groups, k, lambda) = (groups.n_groups(), y.k, self.lambda);
        let cert = &self.cert;
        self.outer += 1;
        let n_screened = n_groups - self.unscreened_groups.len();
        observer.observe_iter(&[
            ("outer", self.outer as f64),
            ("iterations", self.iterations as f64),
            ("gap", cert.relative_gap),
            ("primal", cert.primal),
            ("working_set", self.last_ws as f64),
            ("screened", n_screened as f64),
        ]);
        let out_of_time = self
            .deadline
            .is_some_and(|d| std::time::Instant::now() >= d);
        let on_budget = self.iterations >= params.max_iter || out_of_time;
        let stop_reason = if cert.relative_gap <= params.tol {
            Some(StopReason::Converged)
        } else if !on_budget {
            None
        } else if !params.stop_on_budget {
            return Err(SolverError::NotConverged {
                gap: cert.relative_gap,
                iterations: self.iterations,
            });
        } else if out_of_time {
            Some(StopReason::TimeBudget)
        } else {
            Some(StopReason::IterationBudget)
        };
        if let Some(stop_reason) = stop_reason {
            let (n_active_groups, n_active_atoms) =
                count_active(prep, &self.unscreened_groups, x, k);
            observer.observe_final(&[
                ("iterations", self.iterations as f64),
                ("gap", cert.relative_gap),
                ("n_active_groups", n_active_groups as f64),
            ]);
            return Ok(Some(Info {
                iterations: self.iterations,
                outer_iterations: self.outer,
                duality_gap: cert.relative_gap,
                primal: cert.primal,
                dual: cert.dual,
                lambda,
                lambda_max: self.lambda_max,
                stop_reason,
                n_active_groups,
                n_active_atoms,
                n_screened_groups: n_screened,
                working_set_size: self.last_ws,
                dictionary_passes: self.atom_reads as f64 / prep.dict.n_atoms() as f64,
            }));
        }
        if params.screening {
            let radius = cert.safe_radius(lambda);
            let newly: Vec<usize> = self
                .unscreened_groups
                .iter()
                .copied()
                .filter(|&g| cert.screens(g, radius, prep.group_norm[g]))
                .collect();
            for &g in &newly {
                self.screened[g] = true;
                self.cert.group_correlation[g] = 0.0;
                // The optimum is zero on this group, whatever the iterate holds.
                for &j in groups.atoms(g) {
                    x[j * k..(j + 1) * k].fill(0.0);
                    self.atom_kept[j] = false;
                }
            }
            if !newly.is_empty() {
                let (screened, kept) = (&self.screened, &self.atom_kept);
                self.unscreened_groups.retain(|&g| !screened[g]);
                self.kept_atoms.retain(|&j| kept[j]);
            }
        }
        let cert = &self.cert;
        let (ws, n_active) = choose_working_set(
            prep,
            cert,
            &self.unscreened_groups,
            x,
            k,
            params.working_set,
            self.ws_size,
        );
        self.last_ws = ws.len();
        // Next size: twice the active groups, so the set stays small while
        // the support is small; after a few passes at one λ it doubles each
        // pass, which guarantees that it reaches the whole problem if needed.
        self.ws_size = if self.outer > 3 {
            (2 * self.ws_size).min(n_groups)
        } else {
            params.initial_working_set.max(2 * n_active).min(n_groups)
        };
        let (sub, atoms) = restrict(prep, &ws);
        let mut x_ws: Vec<f64> = atoms
            .iter()
            .flat_map(|&j| x[j * k..(j + 1) * k].iter().copied())
            .collect();
        let inner_tol = (INNER_FRACTION * cert.relative_gap).max(0.25 * params.tol);
        let result = solve_sub(
            &sub,
            &y.cols,
            y.half_sq,
            k,
            lambda,
            &mut x_ws,
            inner_tol,
            params.max_iter - self.iterations,
            self.deadline,
        );
        self.iterations += result.iterations;
        self.atom_reads += result.atom_reads;
        for (i, &j) in atoms.iter().enumerate() {
            x[j * k..(j + 1) * k].copy_from_slice(&x_ws[i * k..(i + 1) * k]);
        }
        Ok(None)
    }
}

/// Groups of `unscreened` with a nonzero block, and their atoms with a
/// nonzero row (all of them: `x` is zero on screened groups).
pub(crate) fn count_active(
    prep: &Prepared,
    unscreened: &[usize],
    x: &[f64],
    k: usize,
) -> (usize, usize) {
    let row_active = |j: usize| x[j * k..(j + 1) * k].iter().any(|&v| v != 0.0);
    let (mut groups, mut atoms) = (0, 0);
    for &g in unscreened {
        let active = prep
            .groups
            .atoms(g)
            .iter()
            .filter(|&&j| row_active(j))
            .count();
        groups += usize::from(active > 0);
        atoms += active;
    }
    (groups, atoms)
}

/// The groups of the next working set, increasing: every active unscreened
/// group, then the best-priority others up to `size` groups in all (all
/// unscreened groups when working sets are off); and the number of active
/// groups (screened groups are zero, so all of them are counted).
fn choose_working_set(
    prep: &Prepared,
    cert: &Certificate,
    unscreened: &[usize],
    x: &[f64],
    k: usize,
    use_working_set: bool,
    size: usize,
) -> (Vec<usize>, usize) {
    let active = |g: usize| {
        prep.groups
            .atoms(g)
            .iter()
            .any(|&j| x[j * k..(j + 1) * k].iter().any(|&v| v != 0.0))
    };
    let mut chosen: Vec<usize> = Vec::new();
    let mut others: Vec<(f64, usize)> = Vec::new();
    let mut n_active = 0;
    for &g in unscreened {
        let is_active = active(g);
        n_active += usize::from(is_active);
        if !use_working_set || is_active {
            chosen.push(g);
        } else {
            let norm = prep.group_norm[g];
            let priority = if norm > 0.0 {
                (1.0 - cert.group_correlation[g] / cert.scale) / norm
            } else {
                f64::INFINITY
            };
            others.push((priority, g));
        }
    }
    let wanted = size.max(2 * chosen.len()).saturating_sub(chosen.len());
    if wanted < others.len() && wanted > 0 {
        // (priority, index) is a total order, so the selected set is unique.
        others.select_nth_unstable_by(wanted - 1, |a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        others.truncate(wanted);
    } else if wanted == 0 {
        others.clear();
    }
    chosen.extend(others.iter().map(|&(_, g)| g));
    chosen.sort_unstable();
    (chosen, n_active)
}

/// The sub-problem on the groups `ws`, and the global index of each of its atoms.
fn restrict(prep: &Prepared, ws: &[usize]) -> (SubProblem, Vec<usize>) {
    let mut atoms = Vec::new();
    let mut offsets = vec![0];
    for &g in ws {
        atoms.extend_from_slice(prep.groups.atoms(g));
        offsets.push(atoms.len());
    }
    let local = (0..atoms.len()).collect();
    let sub = SubProblem {
        dict: prep.dict.select(&atoms),
        offsets,
        local,
    };
    (sub, atoms)
}
