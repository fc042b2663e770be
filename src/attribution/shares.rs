//! Patch shares, region shares, explained variance, source map and peak.

use crate::geometry::Vec3;
use sprs::CsMat;

/// Errors of the attribution stage.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum AttributionError {
    /// Two inputs disagree in size.
    #[error("{what} has length {found}, expected {expected}")]
    Shape {
        /// Which input.
        what: &'static str,
        /// Its length.
        found: usize,
        /// The length the other inputs imply.
        expected: usize,
    },
    /// A region index is outside the region names.
    #[error("source {source_index} has region {region}, but only {n_regions} regions are named")]
    Region {
        /// The source.
        source_index: usize,
        /// Its region index.
        region: i32,
        /// The number of region names.
        n_regions: usize,
    },
}

/// What the attribution needs: the fitted problem plus the source space.
/// Matrices are row-major (the HDF5 layout of design.md).
pub struct AttributionInput<'a> {
    /// Unit-norm atoms, n_ch × n_atoms, in the space the fit used.
    pub atoms: &'a [f64],
    /// Number of channels.
    pub n_channels: usize,
    /// Group of each atom (0..n_groups).
    pub group: &'a [usize],
    /// The scale removed from each atom (its norm before normalisation).
    pub atom_norms: &'a [f64],
    /// Source amplitudes of each unnormalised atom: CSC, n_src × n_atoms.
    pub profile: &'a CsMat<f64>,
    /// Fitted patterns, n_ch × k.
    pub patterns: &'a [f64],
    /// Coefficients, n_atoms × k.
    pub coefficients: &'a [f64],
    /// Number of components k.
    pub n_components: usize,
    /// Region of each source (index into the region names; -1 = none).
    pub source_region: &'a [i32],
    /// Number of named regions.
    pub n_regions: usize,
    /// Source positions (m).
    pub source_positions: &'a [Vec3],
}

/// The attribution of one component.
#[derive(Debug, Clone, PartialEq)]
pub struct ComponentAttribution {
    /// Share of each group (patch); sums to 1 when the reconstruction is non-zero.
    pub group_share: Vec<f64>,
    /// Share of each region; with `unassigned_share` sums to 1.
    pub region_share: Vec<f64>,
    /// Share that falls on sources without a region.
    pub unassigned_share: f64,
    /// 1 − ‖y − ŷ‖² / ‖y‖².
    pub explained_variance: f64,
    /// y − ŷ (n_ch).
    pub residual: Vec<f64>,
    /// Source amplitudes Σ_j p_j x_j / norm_j (n_src), in the profile's unit.
    pub source_map: Vec<f64>,
    /// Index of the source with the largest |amplitude|, if any is non-zero.
    pub peak_source: Option<usize>,
    /// Position of that source (m).
    pub peak_position: Option<Vec3>,
    /// Region of that source (-1 = none).
    pub peak_region: i32,
}

/// The attribution of all components.
#[derive(Debug, Clone, PartialEq)]
pub struct Attribution {
    /// One entry per component.
    pub components: Vec<ComponentAttribution>,
}

fn check(what: &'static str, found: usize, expected: usize) -> Result<(), AttributionError> {
    if found == expected {
        Ok(())
    } else {
        Err(AttributionError::Shape {
            what,
            found,
            expected,
        })
    }
}

/// Where each group's profile lies: Σ over its atoms and sources of |p| per
/// region (the last slot collects sources without a region). Depends only on
/// the dictionary, so resampled fits compute it once.
#[derive(Debug, Clone, PartialEq)]
pub struct RegionMass {
    mass: Vec<Vec<f64>>,
    n_regions: usize,
}

impl RegionMass {
    /// The region mass of every group of a CSC profile (n_src × n_atoms).
    pub fn new(
        profile: &CsMat<f64>,
        group: &[usize],
        source_region: &[i32],
        n_regions: usize,
    ) -> RegionMass {
        let n_groups = group.iter().copied().max().map_or(0, |g| g + 1);
        let owned;
        let profile = if profile.is_csc() {
            profile
        } else {
            owned = profile.to_csc();
            &owned
        };
        let mut mass = vec![vec![0.0; n_regions + 1]; n_groups];
        for (j, column) in profile.outer_iterator().enumerate() {
            let g = group[j];
            for (s, &p) in column.iter() {
                let r = source_region[s];
                let slot = if r < 0 { n_regions } else { r as usize };
                mass[g][slot] += p.abs();
            }
        }
        RegionMass { mass, n_regions }
    }
}

/// The shares of one component with coefficients `x` (n_atoms): per group,
/// per region, unassigned, and the reconstruction ŷ = D x.
pub struct ComponentShares {
    /// Share of each group.
    pub group_share: Vec<f64>,
    /// Share of each region.
    pub region_share: Vec<f64>,
    /// Share on sources without a region.
    pub unassigned_share: f64,
    /// The reconstruction D x (n_ch).
    pub y_hat: Vec<f64>,
}

/// Shares of the reconstruction ŷ = D x: share_g = ⟨D_g x_g, ŷ⟩ / ‖ŷ‖²,
/// spread over regions by each group's profile mass. `atoms` is row-major
/// n_ch × n_atoms.
pub fn component_shares(
    atoms: &[f64],
    n_ch: usize,
    group: &[usize],
    x: &[f64],
    mass: &RegionMass,
) -> ComponentShares {
    let n_atoms = group.len();
    let n_groups = mass.mass.len();
    let n_regions = mass.n_regions;
    // Per-group reconstructions D_g x_g of the active groups only (a
    // sorted map keeps the summation order fixed), summed into ŷ.
    let mut group_recon: std::collections::BTreeMap<usize, Vec<f64>> = Default::default();
    for (j, &xj) in x.iter().enumerate().take(n_atoms) {
        if xj != 0.0 {
            let recon = group_recon
                .entry(group[j])
                .or_insert_with(|| vec![0.0; n_ch]);
            for (i, r) in recon.iter_mut().enumerate() {
                *r += atoms[i * n_atoms + j] * xj;
            }
        }
    }
    let mut y_hat = vec![0.0; n_ch];
    for recon in group_recon.values() {
        for (yh, r) in y_hat.iter_mut().zip(recon) {
            *yh += r;
        }
    }
    let y_hat_sq: f64 = y_hat.iter().map(|v| v * v).sum();
    let mut group_share = vec![0.0; n_groups];
    if y_hat_sq > 0.0 {
        for (&g, recon) in &group_recon {
            group_share[g] = recon.iter().zip(&y_hat).map(|(a, b)| a * b).sum::<f64>() / y_hat_sq;
        }
    }
    let mut region_share = vec![0.0; n_regions];
    let mut unassigned_share = 0.0;
    for &g in group_recon.keys() {
        let share = group_share[g];
        let m = &mass.mass[g];
        let total: f64 = m.iter().sum();
        if share == 0.0 || total <= 0.0 {
            continue;
        }
        for (r, &v) in m.iter().enumerate() {
            let part = share * v / total;
            if r == n_regions {
                unassigned_share += part;
            } else {
                region_share[r] += part;
            }
        }
    }
    ComponentShares {
        group_share,
        region_share,
        unassigned_share,
        y_hat,
    }
}

/// Compute shares, explained variance, residual, source map and peak for
/// every component.
pub fn attribute(input: &AttributionInput<'_>) -> Result<Attribution, AttributionError> {
    attribute_with(input, None)
}

/// [`attribute`] with a precomputed [`RegionMass`] of the same dictionary.
pub fn attribute_with(
    input: &AttributionInput<'_>,
    mass: Option<&RegionMass>,
) -> Result<Attribution, AttributionError> {
    let n_ch = input.n_channels;
    let n_atoms = input.group.len();
    let k = input.n_components;
    let n_src = input.source_region.len();
    check("atoms", input.atoms.len(), n_ch * n_atoms)?;
    check("atom norms", input.atom_norms.len(), n_atoms)?;
    check("patterns", input.patterns.len(), n_ch * k)?;
    check("coefficients", input.coefficients.len(), n_atoms * k)?;
    check("profile rows", input.profile.rows(), n_src)?;
    check("profile columns", input.profile.cols(), n_atoms)?;
    check("source positions", input.source_positions.len(), n_src)?;
    for (s, &r) in input.source_region.iter().enumerate() {
        if r < -1 || r >= input.n_regions as i32 {
            return Err(AttributionError::Region {
                source_index: s,
                region: r,
                n_regions: input.n_regions,
            });
        }
    }
    let owned_mass;
    let mass = match mass {
        Some(m) => m,
        None => {
            owned_mass = RegionMass::new(
                input.profile,
                input.group,
                input.source_region,
                input.n_regions,
            );
            &owned_mass
        }
    };
    let owned_profile;
    let profile = if input.profile.is_csc() {
        input.profile
    } else {
        owned_profile = input.profile.to_csc();
        &owned_profile
    };

    let mut components = Vec::with_capacity(k);
    for c in 0..k {
        let x: Vec<f64> = (0..n_atoms)
            .map(|j| input.coefficients[j * k + c])
            .collect();
        let y: Vec<f64> = (0..n_ch).map(|i| input.patterns[i * k + c]).collect();
        let ComponentShares {
            group_share,
            region_share,
            unassigned_share,
            y_hat,
        } = component_shares(input.atoms, n_ch, input.group, &x, mass);
        let residual: Vec<f64> = y.iter().zip(&y_hat).map(|(a, b)| a - b).collect();
        let y_sq: f64 = y.iter().map(|v| v * v).sum();
        let r_sq: f64 = residual.iter().map(|v| v * v).sum();
        let explained_variance = if y_sq > 0.0 { 1.0 - r_sq / y_sq } else { 0.0 };

        let mut source_map = vec![0.0; n_src];
        for (j, column) in profile.outer_iterator().enumerate() {
            if x[j] != 0.0 && input.atom_norms[j] > 0.0 {
                let w = x[j] / input.atom_norms[j];
                for (s, &p) in column.iter() {
                    source_map[s] += p * w;
                }
            }
        }
        let mut peak_source = None;
        let mut best = 0.0;
        for (s, &v) in source_map.iter().enumerate() {
            if v.abs() > best {
                best = v.abs();
                peak_source = Some(s);
            }
        }
        components.push(ComponentAttribution {
            group_share,
            region_share,
            unassigned_share,
            explained_variance,
            residual,
            peak_position: peak_source.map(|s| input.source_positions[s]),
            peak_region: peak_source.map_or(-1, |s| input.source_region[s]),
            peak_source,
            source_map,
        });
    }
    Ok(Attribution { components })
}
