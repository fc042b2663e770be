//! The scalp potential of a dipole: accelerated Legendre series plus the
//! homogeneous-sphere closed form.
//!
//! # Method
//! For a dipole q at r0 (b = |r0|, inside the innermost sphere) and an
//! electrode on the outer sphere (radius R, direction r̂, cos γ = r̂·r̂0) the
//! potential is (Zhang 1995, Phys Med Biol 40:335)
//!
//! V = 1/(4πσ_N R²) Σ_{n≥1} (2n+1)/n ρ^{n−1} f_n [n (q·r̂0) P_n + q·(r̂ − cos γ r̂0) P′_n],
//!
//! with ρ = b/R and f_n from [`SphereHead::series_factor`]. The same series
//! with every f_n = 1 is the homogeneous sphere of conductivity σ_N, whose sum
//! is known in closed form (Frank 1952; Brody, Terry & Ideker 1973, IEEE TBME
//! 20:141; restated by Mosher, Leahy & Lewis 1999, IEEE TBME 46:245):
//! V_h = (1/4πσ_N) q·[2d/|d|³ + (|d| r + R d)/(R |d| (R |d| + r·d))], d = r − r0.
//! Following de Munck & Peters (1993, IEEE TBME 40:1166) we evaluate
//! V = f_∞ V_h + series with f_n replaced by f_n − f_∞, whose terms decay
//! faster (f_n − f_∞ = O(1/n)) and vanish for a homogeneous head.
//!
//! # Where the series stops
//! Write Δ_n = f_n − f_∞ and D_n = max_{m≥n} |Δ_m| (taken over the
//! precomputed table; past its end we rely on |Δ_m| decreasing, which holds
//! asymptotically since Δ_m = O(1/m)). For a unit moment |q·r̂0| ≤ 1, and
//! |q·(r̂ − cos γ r̂0) P′_n| ≤ sin γ |P′_n| = |P_n^1| ≤ √(n(n+1)/2) (addition
//! theorem), while |P_n| ≤ 1. So the n-th term is at most, in units of
//! 1/(4πσ_N R²), B_n = (2n+1)/n ρ^{n−1} D_n (n + √(n(n+1)/2)), the same bound
//! for every electrode and orientation. Because D_n does not increase and
//! (2n+1)(1 + √((n+1)/(2n))) grows by at most (2n+3)/(2n+1) per step,
//! B_{m+1}/B_m ≤ κ = ρ (2N+5)/(2N+3) for all m > N, so the tail after N terms
//! is at most B_{N+1}/(1 − κ) (geometric series). We take the smallest N for
//! which that is below 1e-12 × 3|f_1|, the peak potential of a unit dipole at
//! the centre (in the same units); eccentric dipoles produce larger
//! potentials, so the bound is relative to a conservative scale.

use crate::geometry::{dot, norm, scale, sub, Vec3};

use super::{HeadError, SphereHead, SERIES_TABLE_LEN};

/// Relative size of the neglected series tail (see the module docs).
pub(crate) const TAIL_TOLERANCE: f64 = 1e-12;

/// Electrodes per block in the vectorised kernel: small enough that the
/// recurrence state stays in registers, large enough to fill the vector lanes.
const BLOCK: usize = 8;

/// Everything about one source that does not depend on the electrode.
#[derive(Debug, Clone)]
pub(crate) struct SourceExpansion {
    /// Source position relative to the centre (m).
    r0: Vec3,
    /// Unit vector along `r0` (any unit vector when the source is at the centre).
    r0_hat: Vec3,
    /// Series coefficients of n P_n (q·r̂0), orders 1..=len, with the
    /// 1/(4πσ_N R²) factor included.
    radial: Vec<f64>,
    /// The tangential part Σ_n t_n P′_n rewritten as Σ_m e_m P_m (m = 0..=len,
    /// e_len = 0), same convention; see [`derivative_to_legendre`].
    tangential: Vec<f64>,
    /// Weight of the closed form: f_∞/(4πσ_N), or 0 for the plain series.
    closed_weight: f64,
    /// Outer radius (m).
    outer: f64,
}

/// Which form of the series to build.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum SeriesForm {
    /// f_∞ × closed form + series of (f_n − f_∞).
    Accelerated,
    /// The plain series of f_n, for checks.
    Plain,
}

impl SphereHead {
    /// Direction of an electrode from the centre, i.e. its radial projection
    /// onto the outer sphere.
    pub(crate) fn electrode_direction(&self, electrode: Vec3) -> Result<Vec3, HeadError> {
        if !electrode.iter().all(|v| v.is_finite()) {
            return Err(HeadError::NotFinite { what: "electrode" });
        }
        let rel = sub(electrode, self.center());
        let length = norm(rel);
        if length <= 1e-12 * self.outer_radius() {
            return Err(HeadError::ElectrodeAtCenter);
        }
        Ok(scale(rel, 1.0 / length))
    }

    /// Precomputes the per-source part of the series.
    pub(crate) fn expansion(
        &self,
        source: Vec3,
        form: SeriesForm,
    ) -> Result<SourceExpansion, HeadError> {
        if !source.iter().all(|v| v.is_finite()) {
            return Err(HeadError::NotFinite { what: "source" });
        }
        let r0 = sub(source, self.center());
        let b = norm(r0);
        let inner = self.inner_radius();
        if b >= inner {
            return Err(HeadError::SourceOutside {
                distance: b,
                inner_radius: inner,
            });
        }
        let outer = self.outer_radius();
        let sigma_n = self.conductivities()[self.n_shells() - 1];
        let rho = b / outer;
        let r0_hat = if b > 0.0 {
            scale(r0, 1.0 / b)
        } else {
            [0.0, 0.0, 1.0]
        };
        let table = &self.table;
        let (shift, sup, closed_weight) = match form {
            SeriesForm::Accelerated => (
                table.f_inf,
                &table.delta_sup,
                table.f_inf / (4.0 * std::f64::consts::PI * sigma_n),
            ),
            SeriesForm::Plain => (0.0, &table.f_sup, 0.0),
        };
        let tolerance = TAIL_TOLERANCE * 3.0 * table.f[1].abs();
        let n_terms = terms_needed(rho, sup, tolerance).ok_or(HeadError::SeriesTooLong {
            limit: SERIES_TABLE_LEN,
            eccentricity: rho,
        })?;
        let k_series = 1.0 / (4.0 * std::f64::consts::PI * sigma_n * outer * outer);
        let mut radial = Vec::with_capacity(n_terms);
        let mut derivative = Vec::with_capacity(n_terms);
        let mut rho_power = 1.0;
        for n in 1..=n_terms {
            let nf = n as f64;
            let common = (2.0 * nf + 1.0) * rho_power * (table.f[n] - shift) * k_series;
            radial.push(common);
            derivative.push(common / nf);
            rho_power *= rho;
        }
        let tangential = derivative_to_legendre(&derivative);
        Ok(SourceExpansion {
            r0,
            r0_hat,
            radial,
            tangential,
            closed_weight,
            outer,
        })
    }

    /// Potential (V) at `electrode` of a unit dipole at `source` along x, y
    /// and z: the three entries of a free-orientation lead-field row.
    ///
    /// The electrode is first projected radially (about the centre) onto the
    /// outer sphere. `source` must lie strictly inside the innermost sphere.
    pub fn potential_xyz(&self, electrode: Vec3, source: Vec3) -> Result<Vec3, HeadError> {
        let direction = self.electrode_direction(electrode)?;
        let expansion = self.expansion(source, SeriesForm::Accelerated)?;
        let mut out = [[0.0; 3]];
        expansion.gain_xyz(self, &[direction], &mut out);
        Ok(out[0])
    }

    /// Potential (V) at `electrode` of a dipole of moment `moment` (A·m) at
    /// `source`; see [`SphereHead::potential_xyz`].
    pub fn potential(&self, electrode: Vec3, source: Vec3, moment: Vec3) -> Result<f64, HeadError> {
        if !moment.iter().all(|v| v.is_finite()) {
            return Err(HeadError::NotFinite { what: "moment" });
        }
        Ok(dot(self.potential_xyz(electrode, source)?, moment))
    }

    /// How many series orders the accelerated evaluation keeps for `source`
    /// (0 for a homogeneous head, where the closed form is exact).
    pub fn series_terms(&self, source: Vec3) -> Result<usize, HeadError> {
        Ok(self
            .expansion(source, SeriesForm::Accelerated)?
            .radial
            .len())
    }

    /// Like [`SphereHead::potential_xyz`] but summing the plain series of f_n
    /// without subtracting the closed form (slower; an independent path for
    /// checks). Same tail bound, with |f_m| in place of |f_m − f_∞|.
    pub fn potential_xyz_unaccelerated(
        &self,
        electrode: Vec3,
        source: Vec3,
    ) -> Result<Vec3, HeadError> {
        let direction = self.electrode_direction(electrode)?;
        let expansion = self.expansion(source, SeriesForm::Plain)?;
        let mut out = [[0.0; 3]];
        expansion.gain_xyz(self, &[direction], &mut out);
        Ok(out[0])
    }
}

/// The smallest N whose tail bound is below `tolerance` (module docs), or
/// `None` if that needs more orders than the table holds.
fn terms_needed(rho: f64, sup: &[f64], tolerance: f64) -> Option<usize> {
    let last = sup.len() - 1;
    // rho_power = ρ^N while testing the tail after N terms (the bound on
    // term N+1 carries ρ^N).
    let mut rho_power = 1.0;
    for n_terms in 0..last {
        let m = (n_terms + 1) as f64;
        let d = sup[n_terms + 1];
        let bound = (2.0 * m + 1.0) / m * rho_power * d * (m + (m * (m + 1.0) / 2.0).sqrt());
        let kappa = rho * (2.0 * m + 3.0) / (2.0 * m + 1.0);
        if d == 0.0 || rho_power == 0.0 || (kappa < 1.0 && bound <= tolerance * (1.0 - kappa)) {
            return Some(n_terms);
        }
        rho_power *= rho;
    }
    None
}

/// Rewrites Σ_{k=1..N} t_k P′_k(x) as Σ_{m=0..N} e_m P_m(x) using
/// P′_k = Σ_{m = k−1, k−3, … ≥ 0} (2m+1) P_m (from P′_{m+1} − P′_{m−1} =
/// (2m+1) P_m), i.e. e_m = (2m+1) Σ_{k > m, k − m odd} t_k. `t[k-1]` holds t_k.
/// Then one Legendre recurrence serves both sums, saving the P′ recurrence.
fn derivative_to_legendre(t: &[f64]) -> Vec<f64> {
    let n = t.len();
    // tail[m] = t_{m+1} + t_{m+3} + … (k <= n), filled from the top down.
    let mut e = vec![0.0; n + 1];
    let mut tail = vec![0.0; n + 2];
    for m in (0..n).rev() {
        tail[m] = t[m] + tail[m + 2];
    }
    for (m, slot) in e.iter_mut().enumerate().take(n) {
        *slot = (2 * m + 1) as f64 * tail[m];
    }
    e
}

impl SourceExpansion {
    /// Potentials of unit dipoles along x, y, z at electrodes given by their
    /// unit directions from the centre; `out[e]` receives electrode e.
    pub(crate) fn gain_xyz(&self, head: &SphereHead, directions: &[Vec3], out: &mut [Vec3]) {
        let table = &head.table;
        for (dirs, outs) in directions.chunks(BLOCK).zip(out.chunks_mut(BLOCK)) {
            let mut x = [0.0; BLOCK];
            for (xi, d) in x.iter_mut().zip(dirs) {
                *xi = dot(*d, self.r0_hat);
            }
            let (sum_radial, sum_tangential) = self.legendre_sums(&x, &table.rec_a, &table.rec_b);
            for (i, (d, o)) in dirs.iter().zip(outs.iter_mut()).enumerate() {
                let tangent = sub(*d, scale(self.r0_hat, x[i]));
                let mut g = [0.0; 3];
                for axis in 0..3 {
                    g[axis] = sum_radial[i] * self.r0_hat[axis] + sum_tangential[i] * tangent[axis];
                }
                if self.closed_weight != 0.0 {
                    let h = homogeneous_vector(scale(*d, self.outer), self.r0, self.outer);
                    for axis in 0..3 {
                        g[axis] += self.closed_weight * h[axis];
                    }
                }
                *o = g;
            }
        }
    }

    /// Σ_n radial_n P_n(x) and Σ_m tangential_m P_m(x) for a block of
    /// electrodes, choosing the widest vector unit the processor has. The
    /// arithmetic is the same operation by operation (no fused multiply-add),
    /// so the result does not depend on which path runs.
    fn legendre_sums(
        &self,
        x: &[f64; BLOCK],
        rec_a: &[f64],
        rec_b: &[f64],
    ) -> ([f64; BLOCK], [f64; BLOCK]) {
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("avx2") {
                // SAFETY: the processor supports AVX2 (checked just above),
                // which is all the target_feature function requires.
                return unsafe {
                    legendre_sums_avx2(x, &self.radial, &self.tangential, rec_a, rec_b)
                };
            }
        }
        legendre_sums_generic(x, &self.radial, &self.tangential, rec_a, rec_b)
    }
}

/// [`legendre_sums_generic`] compiled for AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn legendre_sums_avx2(
    x: &[f64; BLOCK],
    radial: &[f64],
    tangential: &[f64],
    rec_a: &[f64],
    rec_b: &[f64],
) -> ([f64; BLOCK], [f64; BLOCK]) {
    legendre_sums_generic(x, radial, tangential, rec_a, rec_b)
}

/// Σ_{n=1..N} radial[n−1] P_n(x) and Σ_{m=0..N} tangential[m] P_m(x) by
/// Bonnet's recurrence P_{n+1} = ((2n+1) x P_n − n P_{n−1})/(n+1).
#[inline(always)]
fn legendre_sums_generic(
    x: &[f64; BLOCK],
    radial: &[f64],
    tangential: &[f64],
    rec_a: &[f64],
    rec_b: &[f64],
) -> ([f64; BLOCK], [f64; BLOCK]) {
    let mut p_prev = [1.0; BLOCK];
    let mut p = *x;
    let mut sum_r = [0.0; BLOCK];
    let mut sum_t = [tangential.first().copied().unwrap_or(0.0); BLOCK];
    let terms = radial.len();
    let rec_a = &rec_a[1..=terms];
    let rec_b = &rec_b[1..=terms];
    let tangential = &tangential[1..=terms];
    for (((&cr, &ct), &a), &b) in radial.iter().zip(tangential).zip(rec_a).zip(rec_b) {
        for i in 0..BLOCK {
            sum_r[i] += cr * p[i];
            sum_t[i] += ct * p[i];
            let p_next = a * x[i] * p[i] - b * p_prev[i];
            p_prev[i] = p[i];
            p[i] = p_next;
        }
    }
    (sum_r, sum_t)
}

/// The bracket of the homogeneous-sphere closed form,
/// 2d/|d|³ + (|d| r + R d)/(R |d| (R |d| + r·d)) with d = r − r0, for an
/// electrode at `r` on the sphere of radius `outer` (both relative to the
/// centre). Times q/(4πσ) it is the potential.
pub(crate) fn homogeneous_vector(r: Vec3, r0: Vec3, outer: f64) -> Vec3 {
    let d = sub(r, r0);
    let dn = norm(d);
    let first = 2.0 / (dn * dn * dn);
    let denom = outer * dn * (outer * dn + dot(r, d));
    let mut out = [0.0; 3];
    for axis in 0..3 {
        out[axis] = first * d[axis] + (dn * r[axis] + outer * d[axis]) / denom;
    }
    out
}
