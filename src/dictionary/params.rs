//! Parameters of the patch dictionary: radii, profile, orientation, reference, seeds.

use super::DictionaryError;

/// Default patch radii (m): 5, 10 and 20 mm of geodesic distance.
///
/// Why these three: the 5 mm patch (about 0.8 cm² of cortex) resolves focal
/// sources; the 10 mm patch (about 3 cm²) is intermediate; the 20 mm patch
/// covers about π·(20 mm)² ≈ 12.6 cm² (12.5 cm² as a cap on a 70 mm sphere),
/// above the 6–10 cm² of synchronous cortex often quoted as needed for
/// activity to be visible on the scalp (Cooper et al. 1965, Electroenceph Clin
/// Neurophysiol 18:217; Tao et al. 2005, Epilepsia 46:669; recalled, verify).
pub const DEFAULT_RADII_M: [f64; 3] = [0.005, 0.010, 0.020];

/// Default threshold below which an atom counts as degenerate and is dropped,
/// relative to the largest atom norm of the dictionary.
pub const DEFAULT_DROP_RELATIVE_NORM: f64 = 1e-9;

/// How the moment density falls off with geodesic distance `d` from the seed
/// inside a patch of radius `ρ`. Both profiles are 1 at the seed and exactly 0
/// beyond `ρ`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[non_exhaustive]
pub enum Profile {
    /// `exp(−d² / (2σ²))` with `σ = ρ / 2`, truncated at `d = ρ` (= 2σ, where the
    /// density has fallen to e⁻² ≈ 0.135). For a planar isotropic Gaussian the
    /// disc of radius 2σ holds 1 − e⁻² ≈ 86 % of the mass, so the truncation
    /// keeps the patch compact (a bounded number of non-zeros per atom) while
    /// keeping most of the smooth profile (common practice, no source).
    #[default]
    Gaussian,
    /// Uniform density 1 for `d ≤ ρ`.
    Flat,
}

impl Profile {
    /// The relative moment density at geodesic distance `d` (m) in a patch of
    /// radius `radius` (m); 0 beyond the radius.
    pub fn density(self, d: f64, radius: f64) -> f64 {
        if d > radius {
            return 0.0;
        }
        match self {
            Profile::Flat => 1.0,
            Profile::Gaussian => {
                let sigma = 0.5 * radius;
                (-(d * d) / (2.0 * sigma * sigma)).exp()
            }
        }
    }
}

/// Which dipole orientations an atom may take.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[non_exhaustive]
pub enum AtomOrientation {
    /// Along the cortex normals: one atom per patch, made from the lead field
    /// `gain` (n_ch × n_src, already projected on the normals).
    #[default]
    Normal,
    /// Free: three atoms per patch (x, y, z in head coordinates), one group,
    /// made from the free-orientation lead field `gain_xyz` (n_ch × n_src × 3).
    Free,
}

/// The dipole component an atom uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum AtomComponent {
    /// Along the source normals (the lead field `gain`).
    Normal,
    /// Along +x (component 0 of `gain_xyz`).
    X,
    /// Along +y (component 1 of `gain_xyz`).
    Y,
    /// Along +z (component 2 of `gain_xyz`).
    Z,
}

impl AtomComponent {
    /// The component index in `gain_xyz` (0, 1, 2), or `None` for [`AtomComponent::Normal`].
    pub fn xyz_index(self) -> Option<usize> {
        match self {
            AtomComponent::Normal => None,
            AtomComponent::X => Some(0),
            AtomComponent::Y => Some(1),
            AtomComponent::Z => Some(2),
        }
    }

    /// The components one patch gets under an orientation choice, in atom order.
    pub fn for_orientation(orientation: AtomOrientation) -> &'static [AtomComponent] {
        match orientation {
            AtomOrientation::Normal => &[AtomComponent::Normal],
            AtomOrientation::Free => &[AtomComponent::X, AtomComponent::Y, AtomComponent::Z],
        }
    }
}

/// Which sources become patch seeds.
#[derive(Debug, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub enum Seeds {
    /// Every source (vertex) of the mesh, in index order. The simple fallback
    /// when no sampling of the cortex is at hand.
    All,
    /// The given source indices, in this order (for example farthest-point
    /// samples from the geometry module). Must be unique and in range.
    Given(Vec<usize>),
}

impl Seeds {
    /// The seed list for a mesh of `n_sources` sources, checked: non-empty,
    /// in range, unique.
    pub fn resolve(&self, n_sources: usize) -> Result<Vec<usize>, DictionaryError> {
        let list: Vec<usize> = match self {
            Seeds::All => (0..n_sources).collect(),
            Seeds::Given(list) => list.clone(),
        };
        if list.is_empty() {
            return Err(DictionaryError::NoSeeds);
        }
        let mut first_position = vec![usize::MAX; n_sources];
        for (position, &seed) in list.iter().enumerate() {
            if seed >= n_sources {
                return Err(DictionaryError::SeedOutOfRange {
                    position,
                    seed,
                    n_sources,
                });
            }
            if first_position[seed] != usize::MAX {
                return Err(DictionaryError::DuplicateSeed {
                    seed,
                    first: first_position[seed],
                    second: position,
                });
            }
            first_position[seed] = position;
        }
        Ok(list)
    }
}

/// Parameters of [`crate::dictionary::build_dictionary`]. Check them with
/// [`DictionaryParams::validate`] (the builder does so before any numerics).
#[derive(Debug, Clone, PartialEq)]
pub struct DictionaryParams {
    /// Geodesic patch radii (m), finite, > 0, strictly increasing. Default
    /// [`DEFAULT_RADII_M`].
    pub radii_m: Vec<f64>,
    /// The moment-density profile inside a patch.
    pub profile: Profile,
    /// Normal (one atom per patch) or free (three atoms per patch).
    pub orientation: AtomOrientation,
    /// Subtract each atom's channel mean (common average reference). Set to
    /// `false` only if the lead field already carries the reference you want;
    /// re-referencing an average-referenced lead field changes nothing.
    pub average_reference: bool,
    /// An atom whose 2-norm (after referencing) is at most this fraction of the
    /// largest atom norm, or exactly zero, is dropped and listed in
    /// [`crate::dictionary::DictionaryInfo::dropped`]. Finite, in `[0, 1)`.
    pub drop_relative_norm: f64,
}

impl Default for DictionaryParams {
    fn default() -> Self {
        DictionaryParams {
            radii_m: DEFAULT_RADII_M.to_vec(),
            profile: Profile::Gaussian,
            orientation: AtomOrientation::Normal,
            average_reference: true,
            drop_relative_norm: DEFAULT_DROP_RELATIVE_NORM,
        }
    }
}

impl DictionaryParams {
    /// Checks the parameters: at least one radius, every radius finite and
    /// positive, radii strictly increasing, drop threshold in `[0, 1)`.
    pub fn validate(&self) -> Result<(), DictionaryError> {
        if self.radii_m.is_empty() {
            return Err(DictionaryError::NoRadii);
        }
        for (index, &value) in self.radii_m.iter().enumerate() {
            let longest_m = crate::limits::MAX_PATCH_LENGTH_MM * 1e-3;
            if !(value.is_finite() && value > 0.0 && value <= longest_m) {
                return Err(DictionaryError::BadRadius { index, value });
            }
            if index > 0 {
                let previous = self.radii_m[index - 1];
                if value <= previous {
                    return Err(DictionaryError::RadiiNotIncreasing {
                        index,
                        previous,
                        value,
                    });
                }
            }
        }
        let t = self.drop_relative_norm;
        if !(t.is_finite() && (0.0..1.0).contains(&t)) {
            return Err(DictionaryError::BadDropThreshold(t));
        }
        Ok(())
    }
}
