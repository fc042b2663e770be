//! Progress reporting: the solver calls an observer instead of printing.

/// Receives key-value progress data from a fit or a path. Every method has a
/// no-op default, so an observer implements only what it needs (a CLI
/// progress bar, a batch log writer).
///
/// Keys used by [`fit`](super::fit): at init `n_atoms`, `n_groups`, `k`,
/// `lambda`, `lambda_max`; per outer pass `outer`, `iterations`, `gap`
/// (relative), `primal`, `working_set`, `screened`; at the end `iterations`,
/// `gap`, `n_active_groups`. [`path`](super::path) reports `n_lambdas` at
/// init and per λ `index`, `lambda`, `ratio`, `gap`, `n_active_groups`,
/// `explained_variance`.
pub trait Observer {
    /// Called once before the first iteration; `name` says which routine.
    fn observe_init(&mut self, name: &str, data: &[(&'static str, f64)]) {
        let _ = (name, data);
    }
    /// Called after each outer pass (or each λ of a path).
    fn observe_iter(&mut self, data: &[(&'static str, f64)]) {
        let _ = data;
    }
    /// Called once when the routine returns successfully.
    fn observe_final(&mut self, data: &[(&'static str, f64)]) {
        let _ = data;
    }
}

/// An observer that ignores everything.
#[derive(Debug, Clone, Copy, Default)]
pub struct NoObserver;

impl Observer for NoObserver {}

/// An observer that keeps every record (for tests and logs).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Recorder {
    /// `(name, data)` given at init.
    pub init: Vec<(String, Vec<(&'static str, f64)>)>,
    /// Data of every `observe_iter` call, in order.
    pub iterations: Vec<Vec<(&'static str, f64)>>,
    /// Data of every `observe_final` call, in order.
    pub finals: Vec<Vec<(&'static str, f64)>>,
}

impl Recorder {
    /// The values of `key` over the `observe_iter` calls that carried it.
    pub fn series(&self, key: &str) -> Vec<f64> {
        self.iterations
            .iter()
            .filter_map(|rec| rec.iter().find(|(k, _)| *k == key).map(|&(_, v)| v))
            .collect()
    }
}

impl Observer for Recorder {
    fn observe_init(&mut self, name: &str, data: &[(&'static str, f64)]) {
        self.init.push((name.to_string(), data.to_vec()));
    }
    fn observe_iter(&mut self, data: &[(&'static str, f64)]) {
        self.iterations.push(data.to_vec());
    }
    fn observe_final(&mut self, data: &[(&'static str, f64)]) {
        self.finals.push(data.to_vec());
    }
}
