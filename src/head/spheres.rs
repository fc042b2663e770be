//! The concentric-sphere head: shells, validation and the per-order solution.

use crate::geometry::Vec3;

use super::HeadError;

/// Most shells a [`SphereHead`] may have.
pub const MAX_SHELLS: usize = 4;

/// Number of series orders precomputed per head (orders 1..=this).
///
/// The accelerated series needs at most a few hundred orders for sources
/// inside a 4-shell adult head; the unaccelerated one needs about 3000 at
/// eccentricity 0.99 of a single sphere. Beyond this, evaluation returns
/// [`HeadError::SeriesTooLong`] rather than silently truncating.
pub const SERIES_TABLE_LEN: usize = 4096;

/// Concentric spheres, innermost first, about a common centre.
///
/// Shell `k` is the region between `radii[k-1]` (or the centre) and
/// `radii[k]`, with conductivity `conductivities[k]`. Sources must lie
/// strictly inside the innermost sphere; electrodes are projected radially
/// onto the outermost one. Positions in metres, conductivities in S/m.
#[derive(Clone)]
pub struct SphereHead {
    center: Vec3,
    radii: Vec<f64>,
    conductivities: Vec<f64>,
    pub(crate) table: SeriesTable,
}

impl std::fmt::Debug for SphereHead {
    // The series table is derived data; printing it would drown the parameters.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SphereHead")
            .field("center", &self.center)
            .field("radii", &self.radii)
            .field("conductivities", &self.conductivities)
            .finish()
    }
}

impl PartialEq for SphereHead {
    fn eq(&self, other: &Self) -> bool {
        self.center == other.center
            && self.radii == other.radii
            && self.conductivities == other.conductivities
    }
}

/// Per-order quantities that depend only on the head, computed once.
#[derive(Clone)]
pub(crate) struct SeriesTable {
    /// `f[n]` for n = 0..=SERIES_TABLE_LEN (index 0 unused, set to 0).
    pub(crate) f: Vec<f64>,
    /// The asymptote f_∞ = Π 2σ_{k+1}/(σ_k + σ_{k+1}).
    pub(crate) f_inf: f64,
    /// `delta_sup[n]` = max over n <= m <= SERIES_TABLE_LEN of |f_m - f_∞|.
    pub(crate) delta_sup: Vec<f64>,
    /// `f_sup[n]` = max over n <= m <= SERIES_TABLE_LEN of |f_m|.
    pub(crate) f_sup: Vec<f64>,
    /// Legendre recurrence factors (2n+1)/(n+1) and n/(n+1), index n.
    pub(crate) rec_a: Vec<f64>,
    /// See `rec_a`.
    pub(crate) rec_b: Vec<f64>,
}

impl SphereHead {
    /// Builds a head after checking every parameter.
    ///
    /// `radii` (m) strictly increasing and positive, one positive finite
    /// conductivity (S/m) per shell, 1 to 4 shells, finite centre (m).
    pub fn new(center: Vec3, radii: Vec<f64>, conductivities: Vec<f64>) -> Result<Self, HeadError> {
        if radii.is_empty() || radii.len() > MAX_SHELLS {
            return Err(HeadError::ShellCount { count: radii.len() });
        }
        if radii.len() != conductivities.len() {
            return Err(HeadError::LengthMismatch {
                radii: radii.len(),
                conductivities: conductivities.len(),
            });
        }
        for (axis, &value) in center.iter().enumerate() {
            if !value.is_finite() {
                return Err(HeadError::CenterNotFinite { axis, value });
            }
        }
        for (index, &value) in radii.iter().enumerate() {
            if !(value.is_finite() && value > 0.0) {
                return Err(HeadError::RadiusNotPositive { index, value });
            }
            if index > 0 && value <= radii[index - 1] {
                return Err(HeadError::RadiusNotIncreasing {
                    index,
                    value,
                    previous_index: index - 1,
                    previous: radii[index - 1],
                });
            }
        }
        for (index, &value) in conductivities.iter().enumerate() {
            if !(value.is_finite() && value > 0.0) {
                return Err(HeadError::ConductivityNotPositive { index, value });
            }
        }
        let table = SeriesTable::build(&radii, &conductivities);
        Ok(Self {
            center,
            radii,
            conductivities,
            table,
        })
    }

    /// A four-shell adult head: brain, CSF, skull, scalp, centred at the origin.
    ///
    /// Radii 81, 83, 88, 94 mm: the brain sphere leaves 3 mm between it and a
    /// template cortex reaching 78 mm; the CSF (2 mm), skull (5 mm) and scalp
    /// (6 mm) thicknesses are typical adult values recalled from memory.
    /// Conductivities: brain 0.47 S/m and skull 0.02 S/m and scalp 0.41 S/m
    /// are the meta-analysis means of McCann et al. 2019 (Brain Topogr
    /// 32:825; grey matter for the brain); CSF 1.79 S/m at body temperature
    /// is Baumann et al. 1997 (IEEE TBME 44:220). See docs/head_model.md.
    pub fn default_adult() -> Self {
        let radii = vec![0.081, 0.083, 0.088, 0.094];
        let conductivities = vec![0.47, 1.79, 0.02, 0.41];
        let table = SeriesTable::build(&radii, &conductivities);
        Self {
            center: [0.0; 3],
            radii,
            conductivities,
            table,
        }
    }

    /// The common centre (m).
    pub fn center(&self) -> Vec3 {
        self.center
    }

    /// Shell radii (m), innermost first.
    pub fn radii(&self) -> &[f64] {
        &self.radii
    }

    /// Shell conductivities (S/m), innermost first.
    pub fn conductivities(&self) -> &[f64] {
        &self.conductivities
    }

    /// Number of shells.
    pub fn n_shells(&self) -> usize {
        self.radii.len()
    }

    /// Radius of the innermost sphere (m); sources must lie strictly inside.
    pub fn inner_radius(&self) -> f64 {
        self.radii[0]
    }

    /// Radius of the outermost sphere (m), where the electrodes sit.
    pub fn outer_radius(&self) -> f64 {
        self.radii[self.radii.len() - 1]
    }

    /// The series factor f_n of order `n >= 1` (f_n = 1 for a homogeneous head).
    ///
    /// With it the scalp potential is
    /// V = 1/(4πσ_N R²) Σ_n (2n+1)/n (b/R)^{n-1} f_n [n (q·r̂0) P_n(cos γ) +
    /// q·(r̂ − cos γ r̂0) P′_n(cos γ)] (Zhang 1995, Phys Med Biol 40:335).
    /// Here f_n = (σ_N/σ_1) C_N, with C_N the coefficient of the decaying
    /// solution in the scalp when the primary field in the brain has
    /// coefficient 1 (see [`SphereHead::order_solution`]).
    pub fn series_factor(&self, n: usize) -> Result<f64, HeadError> {
        if n == 0 {
            return Err(HeadError::OrderOutOfRange { order: n });
        }
        if n <= SERIES_TABLE_LEN {
            return Ok(self.table.f[n]);
        }
        Ok(solve_order(n, &self.radii, &self.conductivities).0)
    }

    /// The asymptote f_∞ = Π_k 2σ_{k+1}/(σ_k + σ_{k+1}) of the series factors
    /// (de Munck & Peters 1993, IEEE TBME 40:1166).
    pub fn asymptotic_factor(&self) -> f64 {
        self.table.f_inf
    }

    /// The exact solution of order `n` in every shell, for checks.
    ///
    /// With x = r/R (R the outer radius), the order-n potential in shell k is
    /// (A_k x^n + C_k x^{-(n+1)}) S_n(r̂), where S_n is the angular factor of
    /// the primary dipole field in the brain, so that C_1 = 1 (the primary
    /// field) and A_1 is the field reflected back by the outer shells.
    /// Returns `[A_k, C_k]` per shell, innermost first. The values are found
    /// from the outside in (no current through the scalp, then continuity of
    /// V and σ ∂V/∂r at each interface), carrying only bounded ratios, so no
    /// power of the radius ratio overflows. A_k itself grows like
    /// x_k^{-(2n+1)}, so for large n (hundreds) it overflows; use moderate n.
    pub fn order_solution(&self, n: usize) -> Result<Vec<[f64; 2]>, HeadError> {
        if n == 0 {
            return Err(HeadError::OrderOutOfRange { order: n });
        }
        Ok(solve_order(n, &self.radii, &self.conductivities).1)
    }
}

/// Solves order `n` from the scalp inwards.
///
/// Returns f_n and the `[A_k, C_k]` of [`SphereHead::order_solution`].
///
/// At the interface x_k between shells k and k+1 we write both sides relative
/// to x_k^{-(n+1)}: shell k+1 contributes C' (1 + w') with
/// w' = A' x_k^{2n+1}/C', and shell k contributes u + c with u = A_k x_k^{2n+1}.
/// Continuity of V gives u + c = C'(1 + w'); continuity of σ ∂V/∂r gives
/// σ_k (n u − (n+1) c) = σ_{k+1} C' (n w' − (n+1)), so
/// c/C' = [n (1 + w') + (σ_{k+1}/σ_k)((n+1) − n w')]/(2n+1). In the scalp
/// ∂V/∂r = 0 at x = 1 gives A_N = (n+1)/n C_N. Moving w inwards multiplies it
/// by (x_{k-1}/x_k)^{2n+1} < 1, so every quantity stays bounded.
pub(crate) fn solve_order(n: usize, radii: &[f64], sigma: &[f64]) -> (f64, Vec<[f64; 2]>) {
    let shells = radii.len();
    let outer = radii[shells - 1];
    let nf = n as f64;
    let order_power = (2 * n + 1) as f64;
    // w at the outer radius of each shell, and C_k relative to C_N.
    let mut w_out = vec![0.0; shells];
    let mut c_rel = vec![1.0; shells];
    w_out[shells - 1] = (nf + 1.0) / nf;
    for k in (0..shells - 1).rev() {
        // Interface k sits at radii[k], between shell k (inside) and k+1.
        let ratio = radii[k] / radii[k + 1];
        let w_prime = w_out[k + 1] * (order_power * ratio.ln()).exp();
        let p = sigma[k + 1] / sigma[k];
        let c_ratio = (nf * (1.0 + w_prime) + p * ((nf + 1.0) - nf * w_prime)) / order_power;
        let u_ratio = (1.0 + w_prime) - c_ratio;
        w_out[k] = u_ratio / c_ratio;
        c_rel[k] = c_rel[k + 1] * c_ratio;
    }
    // Normalise so that C_1 = 1 (the primary field).
    let c1 = c_rel[0];
    let mut solution = Vec::with_capacity(shells);
    for k in 0..shells {
        let c = c_rel[k] / c1;
        let x_k = radii[k] / outer;
        let a = w_out[k] * c * (-order_power * x_k.ln()).exp();
        solution.push([a, c]);
    }
    let f_n = sigma[shells - 1] / sigma[0] * solution[shells - 1][1];
    (f_n, solution)
}

impl SeriesTable {
    fn build(radii: &[f64], sigma: &[f64]) -> Self {
        let len = SERIES_TABLE_LEN;
        let mut f = vec![0.0; len + 1];
        for (n, slot) in f.iter_mut().enumerate().skip(1) {
            *slot = if radii.len() == 1 {
                1.0
            } else {
                solve_order(n, radii, sigma).0
            };
        }
        let f_inf = sigma
            .windows(2)
            .map(|s| 2.0 * s[1] / (s[0] + s[1]))
            .product::<f64>();
        let mut delta_sup = vec![0.0; len + 1];
        let mut f_sup = vec![0.0; len + 1];
        let mut run_delta: f64 = 0.0;
        let mut run_f: f64 = 0.0;
        for n in (1..=len).rev() {
            run_delta = run_delta.max((f[n] - f_inf).abs());
            run_f = run_f.max(f[n].abs());
            delta_sup[n] = run_delta;
            f_sup[n] = run_f;
        }
        let rec_a = (0..=len + 1)
            .map(|n| (2 * n + 1) as f64 / (n + 1) as f64)
            .collect();
        let rec_b = (0..=len + 1).map(|n| n as f64 / (n + 1) as f64).collect();
        Self {
            f,
            f_inf,
            delta_sup,
            f_sup,
            rec_a,
            rec_b,
        }
    }
}
