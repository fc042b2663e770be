//! Attribution: additive patch and region shares of a fitted pattern, fit
//! quality, the source map and its peak, and resampling summaries.
//!
//! For one component with fitted pattern y, dictionary D and coefficients x,
//! the reconstruction is ŷ = D x = Σ_g D_g x_g and the share of patch g is
//! share_g = ⟨D_g x_g, ŷ⟩ / ‖ŷ‖², so the shares add up to exactly 1 (a
//! variance decomposition of the reconstruction; shares may be negative when
//! patches cancel). A patch's share is spread over regions in proportion to
//! the profile mass the patch has in each region.
//!
//! Beside the shares, [`filter_gain`] reads the filters themselves: the
//! lead field passed through the weights, where each filter listens.

pub mod rng {
    //! Moved to [`crate::numeric`]; this path is kept for code written against it.
    pub use crate::numeric::SplitMix64;
}
mod calibration;
mod gain;
mod shares;
mod uncertainty;

pub use calibration::{leader_probability, leading_region, PlattMap, LEADER_CALIBRATION};
pub use gain::{
    filter_gain, gain_agreement, order_decreasing, spearman, FilterGain, GainAgreement, GainError,
    GainInput, TOP_REGIONS,
};
pub use shares::{
    attribute, attribute_with, component_shares, Attribution, AttributionError, AttributionInput,
    ComponentAttribution, ComponentShares, RegionMass,
};
pub use uncertainty::{lead_frequencies, leaders, percentile, RegionInterval};
