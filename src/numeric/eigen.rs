//! Symmetric eigendecomposition through faer, always sequential so the result does not
//! depend on the thread count.

use faer::diag::Diag;
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::evd::{self, ComputeEigenvectors};
use faer::{Mat, Par};

/// Eigenvalues (non-decreasing) and eigenvectors (columns) of the symmetric `n × n`
/// matrix `a` given row-major. Only the lower triangle is read. `None` when faer's
/// iteration does not converge.
pub(crate) fn symmetric_eigen(a: &[f64], n: usize) -> Option<(Vec<f64>, Mat<f64>)> {
    let m = Mat::from_fn(n, n, |i, j| a[i * n + j]);
    let mut values = Diag::<f64>::zeros(n);
    let mut vectors = Mat::<f64>::zeros(n, n);
    let par = Par::Seq;
    let mut buffer = MemBuffer::new(evd::self_adjoint_evd_scratch::<f64>(
        n,
        ComputeEigenvectors::Yes,
        par,
        Default::default(),
    ));
    evd::self_adjoint_evd(
        m.as_ref(),
        values.as_mut(),
        Some(vectors.as_mut()),
        par,
        MemStack::new(&mut buffer),
        Default::default(),
    )
    .ok()?;
    let values = values.column_vector().iter().copied().collect();
    Some((values, vectors))
}
