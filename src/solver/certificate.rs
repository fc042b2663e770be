//! The duality-gap certificate of the group-LASSO and Gap Safe screening.
//!
//! Primal P(X) = ½‖Y − DX‖_F² + λ Σ_g ‖X_g‖_F. The dual of this problem is
//! D(θ) = ½‖Y‖_F² − (λ²/2)‖Y/λ − θ‖_F² over θ with ‖D_gᵀθ‖_F ≤ 1 for every
//! group; θ = R / max(λ, max_g ‖D_gᵀR‖_F) with R = Y − DX is feasible, so
//! P(X) − D(θ) ≥ 0 bounds the distance to the optimum (the dual of the group
//! LASSO as stated in Ndiaye, Fercoq, Gramfort & Salmon 2017, JMLR 18(128)).

use super::kernels::norm_sq;
use super::operator::DenseDictionary;

/// What Gap Safe screening has left of a problem: the unscreened groups and
/// atoms (each increasing), and per atom whether it is kept.
#[derive(Clone, Copy)]
pub(crate) struct Unscreened<'a> {
    pub groups: &'a [usize],
    pub atoms: &'a [usize],
    pub atom_kept: &'a [bool],
}

/// Workspace and result of one certificate.
pub(crate) struct Certificate {
    /// R = Y − DX, `k` contiguous columns.
    pub residual: Vec<f64>,
    /// Dᵀ R, row-major `n_atoms x k`.
    pub correlation: Vec<f64>,
    /// ‖D_gᵀR‖_F per group.
    pub group_correlation: Vec<f64>,
    pub primal: f64,
    pub dual: f64,
    /// Absolute gap P − D.
    pub gap: f64,
    /// Gap relative to ½‖Y‖_F².
    pub relative_gap: f64,
    /// max(λ, max_g ‖D_gᵀR‖_F): θ = R / scale.
    pub scale: f64,
}

impl Certificate {
    pub fn new(n_ch: usize, n_atoms: usize, n_groups: usize, k: usize) -> Self {
        Self {
            residual: vec![0.0; n_ch * k],
            correlation: vec![0.0; n_atoms * k],
            group_correlation: vec![0.0; n_groups],
            primal: 0.0,
            dual: 0.0,
            gap: 0.0,
            relative_gap: 0.0,
            scale: 0.0,
        }
    }

    /// Computes the certificate of `x` (row-major `n_atoms x k`) for the
    /// problem with dictionary `dict` and group ranges `group_atoms(g)`.
    #[allow(clippy::too_many_arguments)]
    pub fn compute<'g>(
        &mut self,
        dict: &DenseDictionary,
        n_groups: usize,
        group_atoms: impl Fn(usize) -> &'g [usize],
        y_cols: &[f64],
        y_half_sq: f64,
        k: usize,
        lambda: f64,
        x: &[f64],
    ) {
        self.compute_unscreened(
            dict,
            n_groups,
            group_atoms,
            None,
            y_cols,
            y_half_sq,
            k,
            lambda,
            x,
        );
    }

    /// [`Self::compute`] on the problem without the groups that Gap Safe
    /// screening has removed (`unscreened`: what is left). Screening is
    /// safe, so the reduced problem has the same solution and optimal value
    /// as the full one: a dual point feasible for the reduced problem bounds
    /// P(X) − P* just as well, and the screened atoms' correlations need not
    /// be computed (the sequential use of Gap Safe rules in Ndiaye, Fercoq,
    /// Gramfort & Salmon 2017, JMLR 18(128)). `x` must be zero on the
    /// screened groups, and their `group_correlation` is left as it is (the
    /// caller sets it to 0 when it screens a group).
    #[allow(clippy::too_many_arguments)]
    pub fn compute_unscreened<'g>(
        &mut self,
        dict: &DenseDictionary,
        n_groups: usize,
        group_atoms: impl Fn(usize) -> &'g [usize],
        unscreened: Option<Unscreened<'_>>,
        y_cols: &[f64],
        y_half_sq: f64,
        k: usize,
        lambda: f64,
        x: &[f64],
    ) {
        let _ = self.set_residual(dict, y_cols, k, x, unscreened.map(|u| u.atoms));
        match unscreened {
            Some(u) => {
                dict.adjoint_kept_into(&self.residual, k, u.atom_kept, &mut self.correlation)
            }
            None => dict.adjoint_into(&self.residual, k, &mut self.correlation),
        }
        self.reduce(
            n_groups,
            group_atoms,
            unscreened.map(|u| u.groups),
            y_cols,
            y_half_sq,
            k,
            lambda,
            x,
        );
    }

    /// R = Y − DX into `residual`, with `x` nonzero on the atoms `rows` at
    /// most (all when `None`); returns the number of atoms read.
    pub fn set_residual(
        &mut self,
        dict: &DenseDictionary,
        y_cols: &[f64],
        k: usize,
        x: &[f64],
        rows: Option<&[usize]>,
    ) -> usize {
        let touched = dict.apply_rows_into(x, k, rows, &mut self.residual);
        for (r, &yv) in self.residual.iter_mut().zip(y_cols) {
            *r = yv - *r;
        }
        touched
    }

    /// The rest of [`Self::compute_unscreened`] once `residual` and
    /// `correlation` (Dᵀ R on the unscreened atoms) are set: group
    /// correlations of the groups `visit` (increasing; all when `None`; the
    /// others must be zero in `x` and keep their entry), primal, dual and gap.
    #[allow(clippy::too_many_arguments)]
    pub fn reduce<'g>(
        &mut self,
        n_groups: usize,
        group_atoms: impl Fn(usize) -> &'g [usize],
        visit: Option<&[usize]>,
        y_cols: &[f64],
        y_half_sq: f64,
        k: usize,
        lambda: f64,
        x: &[f64],
    ) {
        let mut penalty = 0.0;
        let mut max_corr = 0.0f64;
        let mut one = |g: usize| {
            let (mut c2, mut x2) = (0.0, 0.0);
            for &j in group_atoms(g) {
                c2 += norm_sq(&self.correlation[j * k..(j + 1) * k]);
                x2 += norm_sq(&x[j * k..(j + 1) * k]);
            }
            let c = c2.sqrt();
            self.group_correlation[g] = c;
            max_corr = max_corr.max(c);
            penalty += x2.sqrt();
        };
        match visit {
            Some(groups) => groups.iter().for_each(|&g| one(g)),
            None => (0..n_groups).for_each(&mut one),
        }
        self.finish(y_cols, y_half_sq, lambda, penalty, max_corr);
    }

    /// Primal, dual and gap from the residual, the penalty Σ_g ‖X_g‖_F and
    /// max_g ‖D_gᵀR‖_F.
    fn finish(&mut self, y_cols: &[f64], y_half_sq: f64, lambda: f64, penalty: f64, max_corr: f64) {
        self.primal = 0.5 * norm_sq(&self.residual) + lambda * penalty;
        self.scale = lambda.max(max_corr);
        // λ²‖Y/λ − θ‖² = ‖Y − (λ/s) R‖², summed directly (no cancellation).
        let (s, l) = (self.scale, lambda);
        let ratio = l / s;
        let dist_sq: f64 = y_cols
            .iter()
            .zip(&self.residual)
            .map(|(&yv, &r)| (yv - ratio * r) * (yv - ratio * r))
            .sum();
        self.dual = y_half_sq - 0.5 * dist_sq;
        self.gap = self.primal - self.dual;
        self.relative_gap = if y_half_sq > 0.0 {
            self.gap / y_half_sq
        } else {
            0.0
        };
    }

    /// Gap Safe sphere radius r = √(2·gap)/λ (Ndiaye et al. 2017, JMLR
    /// 18(128), Theorem "Gap Safe sphere"); a negative rounding gap counts as 0.
    pub fn safe_radius(&self, lambda: f64) -> f64 {
        (2.0 * self.gap.max(0.0)).sqrt() / lambda
    }

    /// Whether group `g` is certainly zero at the optimum: ‖D_gᵀθ‖_F + r‖D_g‖₂ < 1.
    /// For a group of several atoms, ‖D_gᵀ(θ − θ*)‖_F ≤ ‖D_g‖₂ ‖θ − θ*‖_F, so
    /// the spectral norm makes the test safe.
    pub fn screens(&self, g: usize, radius: f64, group_norm: f64) -> bool {
        self.group_correlation[g] / self.scale + radius * group_norm < 1.0
    }
}
