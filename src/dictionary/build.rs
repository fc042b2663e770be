//! The dictionary type and its builder: patches → profile matrix → atoms,
//! groups, normalisation and the report of dropped atoms.

use sprs::CsMat;

use super::atoms::{
    atom_columns, atoms_for_channels, check_gains, is_degenerate, max_finite, normalised_row_major,
    ProfileColumns, SourceMajorGain,
};
use super::patches::{build_patches, DistanceOracle};
use super::{AtomComponent, DictionaryError, DictionaryParams, Seeds};
use crate::geometry::Mesh;

/// A multi-scale cortical patch dictionary.
///
/// Convention for amplitudes: a patch coefficient is a peak moment density
/// (A·m/m², the density at the seed). Column `j` of [`Dictionary::profile`] gives,
/// per source, the dipole moment (A·m) that a coefficient of 1 A·m/m² puts
/// there: profile density (1 at the seed) × vertex area, so its entries are in
/// m². The unnormalised atom is `gain × profile[:, j]` (V per A·m/m²), then
/// average-referenced if asked; the stored atom is that divided by
/// `atom_norms[j]`. A fitted coefficient `x_j` of the unit atom therefore
/// means a peak density `x_j / atom_norms[j]` (A·m/m²) and source moments
/// `profile[:, j] · x_j / atom_norms[j]` (A·m).
///
/// Atom order: seeds in the order given, then radii increasing, then the
/// components (normal; or x, y, z). The atoms of a group are contiguous and
/// groups are numbered 0.. in that order.
#[derive(Debug, Clone, PartialEq)]
pub struct Dictionary {
    /// Number of channels (rows of `atoms`).
    pub n_channels: usize,
    /// Number of atoms (columns of `atoms`).
    pub n_atoms: usize,
    /// Number of groups (patches that kept at least one atom).
    pub n_groups: usize,
    /// Row-major n_ch × n_atoms, columns of unit 2-norm.
    pub atoms: Vec<f64>,
    /// Per atom, the 2-norm removed (V per A·m/m²).
    pub atom_norms: Vec<f64>,
    /// Per atom, its group (one group per (seed, radius) patch).
    pub group: Vec<usize>,
    /// Per atom, the seed (source index).
    pub seed: Vec<usize>,
    /// Per atom, the patch radius (mm).
    pub radius_mm: Vec<f64>,
    /// Per atom, the dipole component (normal, or x / y / z).
    pub component: Vec<AtomComponent>,
    /// CSC n_src × n_atoms: source amplitudes (A·m per A·m/m² of peak density).
    pub profile: CsMat<f64>,
}

/// A candidate atom left out because its norm was about zero.
#[derive(Debug, Clone, PartialEq)]
pub struct DroppedAtom {
    /// The seed (source index).
    pub seed: usize,
    /// The patch radius (mm).
    pub radius_mm: f64,
    /// The dipole component.
    pub component: AtomComponent,
    /// Its norm before dropping (after referencing).
    pub norm: f64,
}

/// What the builder did.
#[derive(Debug, Clone, PartialEq)]
pub struct DictionaryInfo {
    /// Number of seeds.
    pub n_seeds: usize,
    /// Candidate patches (seeds × radii).
    pub n_patches: usize,
    /// Groups kept (patches with at least one atom left).
    pub n_groups: usize,
    /// Atoms kept.
    pub n_atoms: usize,
    /// Stored entries of the kept profile matrix.
    pub profile_nnz: usize,
    /// Candidate atoms dropped for a norm of about zero (for example a patch
    /// whose lead field is zero, or purely common-mode so that the average
    /// reference removes it), with their norms.
    pub dropped: Vec<DroppedAtom>,
    /// Per radius, the mean over seeds of the covered cortex area (m²).
    pub mean_patch_area_m2: Vec<f64>,
    /// Per radius, the mean over seeds of the number of covered sources.
    pub mean_patch_sources: Vec<f64>,
}

/// The area each source stands for when the sources are points without
/// triangles: 1 mm², the same for every source, so that a patch weighs its
/// sources equally (patch profiles are area-weighted). Give triangles for
/// true vertex areas.
pub const POINT_SOURCE_AREA_M2: f64 = 1e-6;

/// Builds the patch dictionary: for every seed and radius a geodesic patch
/// with the chosen profile, atoms = lead field × profile (one along the
/// normals, or three free components in one group), average-referenced if
/// asked, scaled to unit norm.
///
/// - `mesh`: the source mesh (metres); sources are its vertices, weighted by
///   their vertex areas ([`POINT_SOURCE_AREA_M2`] each without triangles).
/// - `gain`: row-major n_ch × n_src lead field along the normals (V/(A·m)).
/// - `gain_xyz`: row-major n_ch × n_src × 3 free-orientation lead field;
///   required for [`super::AtomOrientation::Free`].
/// - `seeds`: [`Seeds::All`] or a given list.
/// - `distances`: the geodesic distance oracle (see [`DistanceOracle`]); it
///   is called once per seed with the largest radius.
/// - `progress(1)`: called after each seed (increments that add up to the
///   seed count), possibly from worker threads.
///
/// Atoms whose norm is at most `params.drop_relative_norm` × the largest
/// norm, or zero, are dropped and listed in [`DictionaryInfo::dropped`] rather
/// than divided by zero; if all are, the result is [`DictionaryError::NoAtoms`].
///
/// Errors: invalid parameters, a mesh triangle out of range, lead-field
/// shapes or non-finite values, bad seeds, or an inconsistent oracle answer.
// The argument list is fixed by the pipeline's stage signature (design notes).
#[allow(clippy::too_many_arguments)]
pub fn build_dictionary(
    mesh: &Mesh,
    gain: &[f64],
    gain_xyz: Option<&[f64]>,
    n_channels: usize,
    seeds: &Seeds,
    distances: &DistanceOracle<'_>,
    params: &DictionaryParams,
    progress: &dyn crate::numeric::Progress,
) -> Result<(Dictionary, DictionaryInfo), DictionaryError> {
    params.validate()?;
    let n_src = check_mesh(mesh)?;
    let components = AtomComponent::for_orientation(params.orientation);
    let need_xyz = components.iter().any(|c| c.xyz_index().is_some());
    check_gains(gain, gain_xyz, n_channels, n_src, need_xyz)?;
    let seeds = seeds.resolve(n_src)?;

    // Points without triangles have no vertex areas (all zero, which made
    // every atom zero); each stands for the same documented area instead.
    let areas = if mesh.triangles.is_empty() {
        vec![POINT_SOURCE_AREA_M2; n_src]
    } else {
        mesh.vertex_areas()
    };
    let patches = build_patches(
        &areas,
        &seeds,
        &params.radii_m,
        params.profile,
        distances,
        progress,
    )?;

    // All candidate atoms, in dictionary order.
    let n_radii = params.radii_m.len();
    let n_candidates = seeds.len() * n_radii * components.len();
    let nnz: usize = patches
        .iter()
        .flatten()
        .map(|column| column.indices.len() * components.len())
        .sum();
    let mut indptr = Vec::with_capacity(n_candidates + 1);
    indptr.push(0usize);
    let mut indices = Vec::with_capacity(nnz);
    let mut data = Vec::with_capacity(nnz);
    let mut component = Vec::with_capacity(n_candidates);
    let mut patch_of_atom = Vec::with_capacity(n_candidates);
    let mut area_sum = vec![0.0; n_radii];
    let mut sources_sum = vec![0.0; n_radii];
    for (s, columns) in patches.iter().enumerate() {
        for (r, column) in columns.iter().enumerate() {
            area_sum[r] += column.area_m2;
            sources_sum[r] += column.indices.len() as f64;
            for &c in components {
                indices.extend_from_slice(&column.indices);
                data.extend_from_slice(&column.weights);
                indptr.push(indices.len());
                component.push(c);
                patch_of_atom.push(s * n_radii + r);
            }
        }
    }
    drop(patches);

    let source_major = SourceMajorGain::new(gain, gain_xyz, n_channels, need_xyz);
    let profile_columns = ProfileColumns {
        indptr: &indptr,
        indices: &indices,
        data: &data,
        component: &component,
    };
    let (columns, norms) = atom_columns(profile_columns, &source_major, params.average_reference);
    drop(source_major);

    // Keep the non-degenerate atoms; renumber the groups that survive.
    let max_norm = max_finite(&norms);
    let mut keep = Vec::with_capacity(norms.len());
    let mut dropped = Vec::new();
    let mut group = Vec::with_capacity(norms.len());
    let mut last_patch = usize::MAX;
    let mut n_groups = 0;
    for (j, &norm) in norms.iter().enumerate() {
        let patch = patch_of_atom[j];
        let (s, r) = (patch / n_radii, patch % n_radii);
        if is_degenerate(norm, max_norm, params.drop_relative_norm) {
            dropped.push(DroppedAtom {
                seed: seeds[s],
                radius_mm: params.radii_m[r] * 1e3,
                component: component[j],
                norm,
            });
            continue;
        }
        if patch != last_patch {
            n_groups += 1;
            last_patch = patch;
        }
        keep.push(j);
        group.push(n_groups - 1);
    }
    if keep.is_empty() {
        return Err(DictionaryError::NoAtoms {
            n_dropped: dropped.len(),
        });
    }
    let atoms = normalised_row_major(&columns, &norms, &keep, n_channels);
    drop(columns);

    let (kept_indptr, kept_indices, kept_data) = if dropped.is_empty() {
        (indptr, indices, data)
    } else {
        let mut kept_indptr = Vec::with_capacity(keep.len() + 1);
        kept_indptr.push(0);
        let mut kept_indices = Vec::new();
        let mut kept_data = Vec::new();
        for &j in &keep {
            kept_indices.extend_from_slice(&indices[indptr[j]..indptr[j + 1]]);
            kept_data.extend_from_slice(&data[indptr[j]..indptr[j + 1]]);
            kept_indptr.push(kept_indices.len());
        }
        (kept_indptr, kept_indices, kept_data)
    };
    let profile_nnz = kept_data.len();
    let profile = CsMat::try_new_csc((n_src, keep.len()), kept_indptr, kept_indices, kept_data)
        .map_err(|(_, _, _, e)| {
            DictionaryError::BadProfile(format!("internal profile assembly failed: {e}"))
        })?;

    let n_seeds = seeds.len();
    let dictionary = Dictionary {
        n_channels,
        n_atoms: keep.len(),
        n_groups,
        atoms,
        atom_norms: keep.iter().map(|&j| norms[j]).collect(),
        group,
        seed: keep
            .iter()
            .map(|&j| seeds[patch_of_atom[j] / n_radii])
            .collect(),
        radius_mm: keep
            .iter()
            .map(|&j| params.radii_m[patch_of_atom[j] % n_radii] * 1e3)
            .collect(),
        component: keep.iter().map(|&j| component[j]).collect(),
        profile,
    };
    let info = DictionaryInfo {
        n_seeds,
        n_patches: n_seeds * n_radii,
        n_groups,
        n_atoms: keep.len(),
        profile_nnz,
        dropped,
        mean_patch_area_m2: area_sum.iter().map(|a| a / n_seeds as f64).collect(),
        mean_patch_sources: sources_sum.iter().map(|a| a / n_seeds as f64).collect(),
    };
    Ok((dictionary, info))
}

impl Dictionary {
    /// Recomputes this dictionary's atoms for a subset of channels (for
    /// example those a decoder has), from the profiles and the full lead
    /// field: the rows `keep` (in that order) of `gain` (n_ch × n_src) and of
    /// `gain_xyz` (n_ch × n_src × 3, needed for free orientation) are used,
    /// re-referenced over the subset if `average_reference`, and normalised.
    /// Atoms whose norm falls to about zero become zero columns with norm 0
    /// (see [`atoms_for_channels`]).
    pub fn atoms_for_channel_subset(
        &self,
        gain: &[f64],
        gain_xyz: Option<&[f64]>,
        keep: &[usize],
        average_reference: bool,
        drop_relative_norm: f64,
    ) -> Result<(Vec<f64>, Vec<f64>), DictionaryError> {
        let n_src = self.profile.rows();
        let need_xyz = self.component.iter().any(|c| c.xyz_index().is_some());
        check_gains(gain, gain_xyz, self.n_channels, n_src, need_xyz)?;
        let rows = select_channels(gain, self.n_channels, keep)?;
        let rows_xyz = match gain_xyz {
            Some(g) if need_xyz => Some(select_channels(g, self.n_channels, keep)?),
            _ => None,
        };
        atoms_for_channels(
            &self.profile,
            &self.component,
            &rows,
            rows_xyz.as_deref(),
            keep.len(),
            average_reference,
            drop_relative_norm,
        )
    }
}

/// The rows `keep` (in that order) of a row-major matrix with `n_rows` rows.
/// Errors on an empty, out-of-range or repeated channel list.
pub fn select_channels(
    matrix: &[f64],
    n_rows: usize,
    keep: &[usize],
) -> Result<Vec<f64>, DictionaryError> {
    if keep.is_empty() || n_rows == 0 {
        return Err(DictionaryError::NoChannels);
    }
    if !matrix.len().is_multiple_of(n_rows) {
        return Err(DictionaryError::RaggedMatrix {
            len: matrix.len(),
            n_rows,
        });
    }
    let n_cols = matrix.len() / n_rows;
    let mut seen = vec![usize::MAX; n_rows];
    let mut out = Vec::with_capacity(keep.len() * n_cols);
    for (position, &channel) in keep.iter().enumerate() {
        if channel >= n_rows {
            return Err(DictionaryError::ChannelOutOfRange {
                position,
                channel,
                n_channels: n_rows,
            });
        }
        if seen[channel] != usize::MAX {
            return Err(DictionaryError::DuplicateChannel {
                channel,
                first: seen[channel],
                second: position,
            });
        }
        seen[channel] = position;
        out.extend_from_slice(&matrix[channel * n_cols..(channel + 1) * n_cols]);
    }
    Ok(out)
}

/// Checks the mesh enough for vertex areas to be computed without panicking.
/// Returns the number of sources.
fn check_mesh(mesh: &Mesh) -> Result<usize, DictionaryError> {
    let n_vertices = mesh.n_vertices();
    if n_vertices == 0 {
        return Err(DictionaryError::NoSources);
    }
    for (triangle, tri) in mesh.triangles.iter().enumerate() {
        if let Some(&vertex) = tri.iter().find(|&&v| v as usize >= n_vertices) {
            return Err(DictionaryError::BadTriangle {
                triangle,
                vertex,
                n_vertices,
            });
        }
    }
    Ok(n_vertices)
}
