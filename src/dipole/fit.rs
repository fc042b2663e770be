//! The dipole fitter: gains at trial positions, the grid scan and the
//! Levenberg–Marquardt refinement with the moment profiled out.

use rayon::prelude::*;

use crate::geometry::{add, norm, scale, Vec3};
use crate::head::{SeriesForm, SphereHead};
use crate::numeric::{average_reference_columns, symmetric_eigen};

use super::linalg::{inverse_spd3, solve_spd3, thin_qr, ThinQr};
use super::{Dipole, DipoleError, DipoleFit, DipoleOptions, CHI2_3DOF_95};

/// Central-difference step of the gain derivative (m): truncation error
/// about (h/L)² with L ≈ 5 mm the scale of the field's variation, and
/// rounding about 1e-16 L/h; both are far below 1e-6 here.
const DIFF_STEP: f64 = 1e-6;
/// Most Levenberg–Marquardt iterations per start.
const MAX_ITERATIONS: usize = 200;
/// Stop when a step moves the position by less than this (m).
const STEP_TOLERANCE: f64 = 1e-11;

/// Gains of every grid point, ready for scanning any number of patterns.
#[derive(Clone)]
pub struct DipoleFitter {
    head: SphereHead,
    directions: Vec<Vec3>,
    options: DipoleOptions,
    /// Search radius about the centre (m).
    radius: f64,
    /// Grid positions relative to the centre (m).
    grid: Vec<Vec3>,
    /// Thin QR of each grid point's gain (`None` if rank deficient).
    bases: Vec<Option<ThinQr>>,
}

impl std::fmt::Debug for DipoleFitter {
    // The grid bases are derived data; printing them would drown the setup.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("DipoleFitter")
            .field("head", &self.head)
            .field("n_channels", &self.directions.len())
            .field("options", &self.options)
            .field("radius", &self.radius)
            .field("n_grid_points", &self.grid.len())
            .finish()
    }
}

/// The misfit at one position.
struct Eval {
    p: Vec3,
    qr: ThinQr,
    coef: Vec<f64>,
    residual: Vec<f64>,
    cost: f64,
}

/// The refined optimum from one start.
struct Refined {
    eval: Eval,
    iterations: usize,
}

impl DipoleFitter {
    /// Checks the options and electrodes (m; projected radially onto the
    /// scalp) and computes the grid gains, in parallel over grid points.
    pub fn new(
        head: &SphereHead,
        electrodes: &[Vec3],
        options: &DipoleOptions,
    ) -> Result<Self, DipoleError> {
        let inner = head.inner_radius();
        let positive = |name: &'static str, v: f64, expected: &'static str| {
            if v.is_finite() && v > 0.0 {
                Ok(())
            } else {
                Err(DipoleError::Option {
                    name,
                    value: v,
                    expected,
                })
            }
        };
        positive(
            "grid_spacing",
            options.grid_spacing,
            "a positive length (m)",
        )?;
        positive("margin", options.margin, "a positive length (m)")?;
        if options.margin >= inner {
            return Err(DipoleError::Option {
                name: "margin",
                value: options.margin,
                expected: "less than the innermost radius",
            });
        }
        if options.n_starts == 0 {
            return Err(DipoleError::Option {
                name: "n_starts",
                value: 0.0,
                expected: "at least 1",
            });
        }
        if options.pairs {
            positive(
                "pair_min_offset",
                options.pair_min_offset,
                "a positive length (m)",
            )?;
        }
        if let Some(s) = options.noise_sd {
            positive("noise_sd", s, "a positive number (units of the patterns)")?;
        }
        let (unknowns, model) = if options.pairs {
            (9, "symmetric-pair")
        } else {
            (6, "single-dipole")
        };
        let needed = unknowns + 2;
        if electrodes.len() < needed {
            return Err(DipoleError::TooFewElectrodes {
                count: electrodes.len(),
                needed,
                model,
            });
        }
        let mut directions = Vec::with_capacity(electrodes.len());
        for (index, e) in electrodes.iter().enumerate() {
            directions.push(head.electrode_direction(*e).map_err(|inner| {
                DipoleError::Electrode {
                    index,
                    reason: inner.to_string(),
                }
            })?);
        }
        let radius = inner - options.margin;
        let grid = lattice(radius, options);
        if grid.is_empty() {
            return Err(DipoleError::EmptyGrid {
                spacing_mm: options.grid_spacing * 1e3,
                radius_mm: radius * 1e3,
            });
        }
        let mut fitter = DipoleFitter {
            head: head.clone(),
            directions,
            options: options.clone(),
            radius,
            grid,
            bases: Vec::new(),
        };
        let n = fitter.n_channels();
        let m = fitter.n_columns();
        let bases: Result<Vec<Option<ThinQr>>, DipoleError> = fitter
            .grid
            .par_iter()
            .map(|&p| Ok(thin_qr(&fitter.columns(p)?, n, m)))
            .collect();
        fitter.bases = bases?;
        Ok(fitter)
    }

    /// Number of channels.
    pub fn n_channels(&self) -> usize {
        self.directions.len()
    }

    /// Number of grid points searched.
    pub fn n_grid_points(&self) -> usize {
        self.grid.len()
    }

    /// The options in use.
    pub fn options(&self) -> &DipoleOptions {
        &self.options
    }

    /// Unknowns of the model (position and moments).
    fn n_unknowns(&self) -> usize {
        if self.options.pairs {
            9
        } else {
            6
        }
    }

    fn n_columns(&self) -> usize {
        if self.options.pairs {
            6
        } else {
            3
        }
    }

    /// Average-referenced gain of unit dipoles along x, y, z at `p` (relative
    /// to the centre), column-major n_ch × 3, appended to `out`.
    fn push_gain(&self, p: Vec3, out: &mut Vec<f64>) -> Result<(), DipoleError> {
        let absolute = add(self.head.center(), p);
        let expansion = self
            .head
            .expansion(absolute, SeriesForm::Accelerated)
            .map_err(|inner| DipoleError::Head {
                x_mm: absolute[0] * 1e3,
                y_mm: absolute[1] * 1e3,
                z_mm: absolute[2] * 1e3,
                inner,
            })?;
        let n = self.n_channels();
        let mut rows = vec![[0.0; 3]; n];
        expansion.gain_xyz(&self.head, &self.directions, &mut rows);
        // Channel-order sum: the same on every thread.
        average_reference_columns(rows.as_flattened_mut(), 3);
        for axis in 0..3 {
            out.extend(rows.iter().map(|g| g[axis]));
        }
        Ok(())
    }

    /// The model's gain columns at parameter `p`: n_ch × 3, or n_ch × 6 for
    /// a pair (the dipole at p, then its mirror), column-major.
    fn columns(&self, p: Vec3) -> Result<Vec<f64>, DipoleError> {
        let mut out = Vec::with_capacity(self.n_channels() * self.n_columns());
        self.push_gain(p, &mut out)?;
        if self.options.pairs {
            self.push_gain([-p[0], p[1], p[2]], &mut out)?;
        }
        Ok(out)
    }

    /// Misfit at `p`; `None` when the gain there is rank deficient.
    fn evaluate(&self, p: Vec3, y: &[f64]) -> Result<Option<Eval>, DipoleError> {
        let n = self.n_channels();
        let m = self.n_columns();
        let cols = self.columns(p)?;
        let Some(qr) = thin_qr(&cols, n, m) else {
            return Ok(None);
        };
        let coef = qr.solve(y);
        let mut residual = y.to_vec();
        for (j, c) in coef.iter().enumerate() {
            for (r, g) in residual.iter_mut().zip(&cols[j * n..(j + 1) * n]) {
                *r -= c * g;
            }
        }
        let cost = residual.iter().map(|r| r * r).sum();
        Ok(Some(Eval {
            p,
            qr,
            coef,
            residual,
            cost,
        }))
    }

    /// Kaufman's Jacobian of the profiled residual at `e`: column i is
    /// −(I − P_G) (∂G/∂p_i) q, ∂G by central differences.
    fn jacobian(&self, e: &Eval) -> Result<[Vec<f64>; 3], DipoleError> {
        let n = self.n_channels();
        let mut out: [Vec<f64>; 3] = Default::default();
        for (i, slot) in out.iter_mut().enumerate() {
            let mut step = [0.0; 3];
            step[i] = DIFF_STEP;
            let plus = self.columns(add(e.p, step))?;
            let minus = self.columns(add(e.p, scale(step, -1.0)))?;
            let mut d = vec![0.0; n];
            for (j, c) in e.coef.iter().enumerate() {
                for (ch, v) in d.iter_mut().enumerate() {
                    *v += c * (plus[j * n + ch] - minus[j * n + ch]) / (2.0 * DIFF_STEP);
                }
            }
            *slot = e.qr.project_out(&d).into_iter().map(|v| -v).collect();
        }
        Ok(out)
    }

    /// The feasible point nearest to `p` (ball, and the pair's offset).
    fn project(&self, p: Vec3) -> Vec3 {
        let mut q = p;
        let min_x = self.options.pair_min_offset;
        if self.options.pairs && q[0] < min_x {
            q[0] = min_x;
        }
        let r = norm(q);
        if r > self.radius {
            q = scale(q, self.radius / r);
            if self.options.pairs && q[0] < min_x {
                let yz = (q[1] * q[1] + q[2] * q[2]).sqrt();
                let target = (self.radius * self.radius - min_x * min_x).max(0.0).sqrt();
                let s = if yz > 0.0 { target / yz } else { 0.0 };
                q = [min_x, q[1] * s, q[2] * s];
            }
        }
        q
    }

    fn on_boundary(&self, p: Vec3) -> bool {
        let tol = 1e-9;
        norm(p) >= self.radius - tol
            || (self.options.pairs && p[0] <= self.options.pair_min_offset + tol)
    }

    /// Levenberg–Marquardt from `start`.
    fn refine(&self, start: Eval, y: &[f64]) -> Result<Refined, DipoleError> {
        let mut cur = start;
        let mut mu = 1e-3;
        let floor = 1e-30 * y.iter().map(|v| v * v).sum::<f64>();
        let mut iterations = 0;
        while iterations < MAX_ITERATIONS && cur.cost > floor {
            iterations += 1;
            let j = self.jacobian(&cur)?;
            let mut a = [[0.0; 3]; 3];
            let mut g = [0.0; 3];
            for r in 0..3 {
                for c in 0..3 {
                    a[r][c] = j[r].iter().zip(&j[c]).map(|(x, y)| x * y).sum();
                }
                g[r] = j[r].iter().zip(&cur.residual).map(|(x, y)| x * y).sum();
            }
            let mut accepted = None;
            while mu < 1e12 {
                let mut damped = a;
                for (d, row) in damped.iter_mut().enumerate() {
                    row[d] += mu * a[d][d].max(1e-300);
                }
                let Some(delta) = solve_spd3(&damped, [-g[0], -g[1], -g[2]]) else {
                    mu *= 4.0;
                    continue;
                };
                let p_new = self.project(add(cur.p, delta));
                match self.evaluate(p_new, y)? {
                    Some(e) if e.cost < cur.cost => {
                        accepted = Some(e);
                        mu = (mu / 3.0).max(1e-12);
                        break;
                    }
                    _ => mu *= 4.0,
                }
            }
            let Some(next) = accepted else {
                break;
            };
            let moved = norm([
                next.p[0] - cur.p[0],
                next.p[1] - cur.p[1],
                next.p[2] - cur.p[2],
            ]);
            cur = next;
            if moved < STEP_TOLERANCE {
                break;
            }
        }
        Ok(Refined {
            eval: cur,
            iterations,
        })
    }

    /// Grid indices to refine: the best scores, mutually at least two grid
    /// spacings apart, first index on ties.
    fn starts(&self, y: &[f64]) -> Vec<usize> {
        let mut scored: Vec<(f64, usize)> = self
            .bases
            .iter()
            .enumerate()
            .filter_map(|(i, b)| {
                b.as_ref()
                    .map(|qr| (qr.qt(y).iter().map(|v| v * v).sum(), i))
            })
            .collect();
        scored.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
        let min_sep = 2.0 * self.options.grid_spacing;
        let mut chosen: Vec<usize> = Vec::new();
        for (_, i) in scored {
            if chosen.len() >= self.options.n_starts {
                break;
            }
            let p = self.grid[i];
            let far = chosen.iter().all(|&c| {
                let q = self.grid[c];
                norm([p[0] - q[0], p[1] - q[1], p[2] - q[2]]) >= min_sep
            });
            if far {
                chosen.push(i);
            }
        }
        chosen
    }

    /// Fits one average-referenced pattern (`component` only names it in errors).
    fn fit_one(&self, y: &[f64], component: usize) -> Result<DipoleFit, DipoleError> {
        let mut best: Option<Refined> = None;
        for i in self.starts(y) {
            let Some(start) = self.evaluate(self.grid[i], y)? else {
                continue;
            };
            let refined = self.refine(start, y)?;
            if best
                .as_ref()
                .is_none_or(|b| refined.eval.cost < b.eval.cost)
            {
                best = Some(refined);
            }
        }
        let best = best.ok_or(DipoleError::NoStart { component })?;
        self.summarise(best, y)
    }

    /// Moments, residual variance and the confidence region at the optimum.
    fn summarise(&self, best: Refined, y: &[f64]) -> Result<DipoleFit, DipoleError> {
        let e = &best.eval;
        let n = self.n_channels();
        let norm_y: f64 = y.iter().map(|v| v * v).sum();
        let center = self.head.center();
        let mut dipoles = vec![Dipole {
            position: add(center, e.p),
            moment: [e.coef[0], e.coef[1], e.coef[2]],
        }];
        if self.options.pairs {
            dipoles.push(Dipole {
                position: add(center, [-e.p[0], e.p[1], e.p[2]]),
                moment: [e.coef[3], e.coef[4], e.coef[5]],
            });
        }
        let dof = n - 1 - self.n_unknowns();
        let (noise_sd, estimated) = match self.options.noise_sd {
            Some(s) => (s, false),
            None => ((e.cost / dof as f64).sqrt(), true),
        };
        let j = self.jacobian(e)?;
        let mut a = [[0.0; 3]; 3];
        for r in 0..3 {
            for c in 0..3 {
                a[r][c] = j[r].iter().zip(&j[c]).map(|(x, y)| x * y).sum();
            }
        }
        let mut covariance = [[f64::NAN; 3]; 3];
        let mut semi = [f64::NAN; 3];
        if let Some(inv) = inverse_spd3(&a) {
            for r in 0..3 {
                for c in 0..3 {
                    covariance[r][c] = noise_sd * noise_sd * inv[r][c];
                }
            }
            let flat: Vec<f64> = covariance.iter().flatten().copied().collect();
            if let Some((values, _)) = symmetric_eigen(&flat, 3) {
                // Eigenvalues come non-decreasing; report the largest first.
                for (s, v) in semi.iter_mut().zip(values.iter().rev()) {
                    *s = (CHI2_3DOF_95 * v.max(0.0)).sqrt();
                }
            }
        }
        Ok(DipoleFit {
            dipoles,
            residual_variance: e.cost / norm_y,
            covariance,
            ci95_semi_axes: semi,
            ci95_radius: semi[0],
            noise_sd,
            noise_sd_estimated: estimated,
            at_boundary: self.on_boundary(e.p),
            iterations: best.iterations,
        })
    }

    /// Fits every column of the row-major `n_ch × k` `patterns` (average
    /// referenced here; already referenced patterns are unchanged), in
    /// parallel over components; each fit is sequential, so the result does
    /// not depend on the thread count.
    ///
    /// Errors: a shape mismatch, a non-finite value, a pattern that is zero
    /// or constant over the channels (each naming the component).
    pub fn fit(&self, patterns: &[f64], k: usize) -> Result<Vec<DipoleFit>, DipoleError> {
        let columns = referenced_columns(patterns, self.n_channels(), k)?;
        columns
            .par_iter()
            .enumerate()
            .map(|(c, y)| self.fit_one(y, c))
            .collect()
    }
}

/// The columns of `patterns`, average-referenced and checked.
fn referenced_columns(patterns: &[f64], n: usize, k: usize) -> Result<Vec<Vec<f64>>, DipoleError> {
    if patterns.len() != n * k || k == 0 {
        return Err(DipoleError::Shape {
            found: patterns.len(),
            n_channels: n,
            k,
        });
    }
    let mut out = Vec::with_capacity(k);
    for component in 0..k {
        let raw: Vec<f64> = (0..n).map(|i| patterns[i * k + component]).collect();
        if let Some(channel) = raw.iter().position(|v| !v.is_finite()) {
            return Err(DipoleError::NotFinite { component, channel });
        }
        let mut y = raw.clone();
        average_reference_columns(&mut y, 1);
        let size = raw.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let left = y.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        if size == 0.0 || left <= 1e-12 * size {
            return Err(DipoleError::FlatPattern { component });
        }
        out.push(y);
    }
    Ok(out)
}

/// Cubic lattice points (relative to the centre) of the search: inside the
/// ball of `radius`, and for a pair only those with x ≥ the pair's offset.
fn lattice(radius: f64, options: &DipoleOptions) -> Vec<Vec3> {
    let h = options.grid_spacing;
    let steps = (radius / h).floor() as i64;
    let mut out = Vec::new();
    for i in -steps..=steps {
        for j in -steps..=steps {
            for k in -steps..=steps {
                let p = [i as f64 * h, j as f64 * h, k as f64 * h];
                if norm(p) > radius || (options.pairs && p[0] < options.pair_min_offset) {
                    continue;
                }
                out.push(p);
            }
        }
    }
    out
}

/// Fits single dipoles (or symmetric pairs) to the columns of the row-major
/// `n_ch × k` `patterns` measured at `electrodes` (m); see [`DipoleFitter`].
pub fn fit_dipoles(
    head: &SphereHead,
    electrodes: &[Vec3],
    patterns: &[f64],
    k: usize,
    options: &DipoleOptions,
) -> Result<Vec<DipoleFit>, DipoleError> {
    DipoleFitter::new(head, electrodes, options)?.fit(patterns, k)
}
