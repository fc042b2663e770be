//! A validated problem: dictionary, groups, patterns in the solver's layout, λ_max.

use faer::{Mat, Side};

use super::error::{check_finite_row_major, check_len, SolverError};
use super::groups::Groups;
use super::kernels::norm_sq;
use super::operator::DenseDictionary;

/// Dictionary and groups checked against each other, with the spectral norm
/// ‖D_g‖₂ of every group (needed by Gap Safe screening and the working-set
/// priorities).
pub(crate) struct Prepared<'a> {
    pub dict: &'a DenseDictionary,
    pub groups: &'a Groups,
    pub group_norm: Vec<f64>,
}

impl<'a> Prepared<'a> {
    pub fn new(dict: &'a DenseDictionary, groups: &'a Groups) -> Result<Self, SolverError> {
        if groups.n_atoms() != dict.n_atoms() {
            return Err(SolverError::GroupCount {
                n_atoms: dict.n_atoms(),
                got: groups.n_atoms(),
            });
        }
        let group_norm = (0..groups.n_groups())
            .map(|g| spectral_norm(dict, groups.atoms(g)))
            .collect();
        Ok(Self {
            dict,
            groups,
            group_norm,
        })
    }

    /// ‖B_g‖_F for every group of a row-major `n_atoms x k` block `b`.
    pub fn group_frobenius(&self, b: &[f64], k: usize, out: &mut [f64]) {
        for (g, o) in out.iter_mut().enumerate() {
            *o = self
                .groups
                .atoms(g)
                .iter()
                .map(|&j| norm_sq(&b[j * k..(j + 1) * k]))
                .sum::<f64>()
                .sqrt();
        }
    }
}

/// Largest singular value of the atoms `members` of `dict`: the atom norm for
/// one atom, else the square root of the largest eigenvalue of the small Gram
/// matrix. If the eigensolver fails, the Frobenius norm is used, which is an
/// upper bound and therefore still safe for screening.
fn spectral_norm(dict: &DenseDictionary, members: &[usize]) -> f64 {
    if let [j] = members {
        return dict.atom_norm(*j);
    }
    let m = members.len();
    let gram = Mat::<f64>::from_fn(m, m, |a, b| {
        super::kernels::dot(dict.atom(members[a]), dict.atom(members[b]))
    });
    let frobenius = (0..m).map(|a| gram[(a, a)]).sum::<f64>().sqrt();
    match gram.self_adjoint_eigenvalues(Side::Lower) {
        Ok(ev) => ev
            .iter()
            .copied()
            .fold(0.0f64, f64::max)
            .sqrt()
            .min(frobenius),
        Err(_) => frobenius,
    }
}

/// Patterns Y in the solver's layout: `k` contiguous columns of `n_ch` values.
pub(crate) struct Targets {
    pub k: usize,
    pub cols: Vec<f64>,
    /// ½‖Y‖_F².
    pub half_sq: f64,
}

impl Targets {
    /// Converts the row-major `n_ch x k` layout of `/patterns/values`.
    pub fn from_row_major(n_ch: usize, k: usize, y: &[f64]) -> Result<Self, SolverError> {
        if k == 0 {
            return Err(SolverError::EmptyDimension { what: "k" });
        }
        check_len(
            "y (n_ch x k, row-major)",
            || format!("{n_ch} x {k}"),
            n_ch * k,
            y.len(),
        )?;
        check_finite_row_major("y (n_ch x k, row-major)", y, k)?;
        let mut cols = vec![0.0; n_ch * k];
        for (c, row) in y.chunks_exact(k).enumerate() {
            for (col, &v) in row.iter().enumerate() {
                cols[col * n_ch + c] = v;
            }
        }
        let half_sq = 0.5 * norm_sq(&cols);
        Ok(Self { k, cols, half_sq })
    }
}

/// λ_max = max_g ‖D_gᵀY‖_F, the smallest λ whose solution is zero.
pub(crate) fn lambda_max(prep: &Prepared, y: &Targets) -> f64 {
    let mut corr = vec![0.0; prep.dict.n_atoms() * y.k];
    prep.dict.adjoint_into(&y.cols, y.k, &mut corr);
    let mut norms = vec![0.0; prep.groups.n_groups()];
    prep.group_frobenius(&corr, y.k, &mut norms);
    norms.iter().copied().fold(0.0, f64::max)
}

/// Converts `k` contiguous columns of `n` values to row-major `n x k`.
pub(crate) fn columns_to_row_major(cols: &[f64], n: usize, k: usize) -> Vec<f64> {
    let mut out = vec![0.0; n * k];
    for (col, column) in cols.chunks_exact(n).enumerate() {
        for (i, &v) in column.iter().enumerate() {
            out[i * k + col] = v;
        }
    }
    out
}

/// λ_max of each of `n_draws` pattern blocks: for draw d, the `kb` columns
/// `e[(d·kb + c)·n_ch ..][..n_ch]` (column-major, as [`Targets`] holds them),
/// max_g ‖D_gᵀE_d‖_F. With E white Gaussian this samples the null
/// distribution of the largest group correlation of pure noise, whose
/// quantile sets λ in the quantile universal threshold (Giacobino, Sardy,
/// Diaz-Rodriguez & Hengartner 2017, Electron J Stat 11:4701; page numbers
/// from memory).
///
/// # Errors
/// Shape errors when `e` does not hold `n_draws · kb` columns of `n_ch`, or
/// the groups do not match the dictionary.
pub fn null_lambda_max(
    dict: &DenseDictionary,
    groups: &Groups,
    e: &[f64],
    kb: usize,
    n_draws: usize,
) -> Result<Vec<f64>, SolverError> {
    let prep = Prepared::new(dict, groups)?;
    let n = dict.n_channels();
    if kb == 0 {
        return Err(SolverError::EmptyDimension { what: "kb" });
    }
    check_len(
        "noise draws (n_ch x kb per draw, column-major)",
        || format!("{n} x {} ", kb * n_draws),
        n * kb * n_draws,
        e.len(),
    )?;
    // A few draws at a time keep Dᵀ E small (n_atoms × the chunk's columns).
    const CHUNK: usize = 16;
    let mut out = Vec::with_capacity(n_draws);
    let mut norms = vec![0.0; groups.n_groups()];
    for first in (0..n_draws).step_by(CHUNK) {
        let draws = CHUNK.min(n_draws - first);
        let cols = draws * kb;
        let block = &e[first * kb * n..(first * kb + cols) * n];
        let mut corr = vec![0.0; dict.n_atoms() * cols];
        dict.adjoint_into(block, cols, &mut corr);
        for d in 0..draws {
            // The kb columns of draw d, as a row-major n_atoms × kb block.
            let sub: Vec<f64> = (0..dict.n_atoms())
                .flat_map(|j| {
                    corr[j * cols + d * kb..j * cols + (d + 1) * kb]
                        .iter()
                        .copied()
                })
                .collect();
            prep.group_frobenius(&sub, kb, &mut norms);
            out.push(norms.iter().copied().fold(0.0, f64::max));
        }
    }
    Ok(out)
}
