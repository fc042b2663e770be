//! The demo's simulation: the invented scenario's decoder, computed with a
//! head that differs from the one the fit assumes (a thinner-conducting
//! skull), on the demo's 64 channels of the 10-10 system.

use super::time_course::build_time_resolved;
use super::{build, Scenario, SimulationSpace, TimeScenario, CHANNELS_64};
use crate::forward::Orientation;
use crate::geometry::{template, GeodesicSolver, SourceSpace, TemplateResolution};
use crate::head::SphereHead;
use crate::montage::standard;
use crate::pipeline::leadfield_for;

/// Skull conductivity of the simulation head (S/m); the fit assumes the
/// default head's 0.02 S/m, so the demo includes a head-model mismatch.
pub const SIMULATION_SKULL: f64 = 0.015;

/// A failed step of the simulation (a failure while computing: every input
/// is built in).
#[derive(Debug, thiserror::Error)]
#[error("{step}")]
pub struct SimulationError {
    /// The step that failed.
    pub step: &'static str,
    #[source]
    source: Box<dyn std::error::Error + Send + Sync>,
}

fn at<E: std::error::Error + Send + Sync + 'static>(
    step: &'static str,
) -> impl FnOnce(E) -> SimulationError {
    move |e| SimulationError {
        step,
        source: Box::new(e),
    }
}

/// The simulated decoders of the demo.
#[derive(Debug, Clone)]
pub struct Simulated {
    /// The spatial decoder (three components).
    pub scenario: Scenario,
    /// The time-resolved decoder of the same subject.
    pub time: TimeScenario,
    /// The channel labels, in decoder order.
    pub labels: Vec<String>,
}

/// Simulate the scenario on the template at `res`.
pub fn simulate(res: TemplateResolution) -> Result<Simulated, SimulationError> {
    let t = template(res);
    let fit_head = SphereHead::default_adult();
    let mut cond = fit_head.conductivities().to_vec();
    cond[2] = SIMULATION_SKULL;
    let sim_head = SphereHead::new(fit_head.center(), fit_head.radii().to_vec(), cond)
        .map_err(at("simulation head"))?;
    let full = standard("10-10", fit_head.outer_radius()).map_err(at("demo montage"))?;
    let labels: Vec<String> = CHANNELS_64.iter().map(|s| s.to_string()).collect();
    let idx = full.select(&labels).map_err(at("demo channels"))?;
    let montage = full.subset(&idx);
    let sources = SourceSpace::from_template(&t);
    let (lf, _) = leadfield_for(&montage, &sources, &sim_head, Orientation::Normal, &|_| {})
        .map_err(at("simulation lead field"))?;
    let solver = GeodesicSolver::new(&t.mesh).map_err(at("template mesh"))?;
    let oracle = |s: usize, r: f64| solver.distances_within(s, r);
    let space = SimulationSpace {
        mesh: &t.mesh,
        region: &t.region,
        region_names: &t.region_names,
        gain_sim: &lf.gain,
        n_channels: lf.n_channels(),
        distances: &oracle,
    };
    let scenario = build(&space).map_err(at("building the demo scenario"))?;
    let time = build_time_resolved(&space, &scenario.covariance)
        .map_err(at("building the demo's time-resolved decoder"))?;
    Ok(Simulated {
        scenario,
        time,
        labels: montage.labels,
    })
}
