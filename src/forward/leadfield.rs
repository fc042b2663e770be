//! The lead field of a head (concentric spheres or boundary elements) at a
//! set of sources.

use rayon::prelude::*;

use crate::geometry::{dot, norm, Vec3};
use crate::head::bem::BemTransfer;
use crate::head::{HeadError, SeriesForm, SphereHead};
use crate::numeric::average_reference_columns;

use super::ForwardError;

/// Sources per parallel work item. Each item is independent, so the result
/// does not depend on how rayon schedules them.
const CHUNK: usize = 64;

/// How the sources are oriented.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Orientation {
    /// Along the given normals only (`gain`).
    Normal,
    /// Also x, y, z (`gain_xyz`), as well as along the normals.
    Free,
}

/// The reference of the lead-field rows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Reference {
    /// Common average: every column has zero sum over the channels.
    Average,
    /// Potential against infinity (the model's own zero).
    None,
}

/// Scalp potentials of unit dipoles: the gain matrices [`lead_field`]
/// computes. The lead field as an artefact (with its channels, sources and
/// head) is [`super::LeadField`].
#[derive(Debug, Clone, PartialEq)]
pub struct Gain {
    /// Number of channels (rows).
    pub n_channels: usize,
    /// Number of sources (columns).
    pub n_sources: usize,
    /// Row-major `n_channels × n_sources`, V/(A·m), dipoles along the normals.
    pub gain: Vec<f64>,
    /// Row-major `n_channels × n_sources × 3`, V/(A·m), dipoles along x, y, z;
    /// present for [`Orientation::Free`].
    pub gain_xyz: Option<Vec<f64>>,
    /// The reference applied to every column.
    pub reference: Reference,
}

/// Computes the lead field of `head` for dipoles at `sources` (m) with unit
/// `normals`, measured at `electrodes` (m; projected radially onto the
/// scalp sphere about its centre).
///
/// `progress` is called with the number of sources just finished, once per
/// chunk of sources, from worker threads. Sources are processed in parallel
/// (rayon), each independently, so the result is the same whatever the
/// thread count.
///
/// Errors: fewer than 3 electrodes, no sources, a count mismatch between
/// sources and normals, a non-finite coordinate, a normal whose length is
/// not 1 within 1e-6, an electrode at the centre, a source not strictly
/// inside the innermost sphere; each names the index.
pub fn lead_field(
    head: &SphereHead,
    electrodes: &[Vec3],
    sources: &[Vec3],
    normals: &[Vec3],
    orientation: Orientation,
    reference: Reference,
    progress: &dyn crate::numeric::Progress,
) -> Result<Gain, ForwardError> {
    let directions = validate(head, electrodes, sources, normals)?;
    let column_of = |source: Vec3, column: &mut [Vec3]| -> Result<(), HeadError> {
        head.expansion(source, SeriesForm::Accelerated)?
            .gain_xyz(head, &directions, column);
        Ok(())
    };
    assemble(
        electrodes.len(),
        (sources, normals),
        orientation,
        reference,
        &column_of,
        progress,
    )
}

/// Computes the lead field of a boundary-element head for dipoles at
/// `sources` (m, inside the innermost surface) with unit `normals`, at the
/// electrodes of `transfer` (placed on the scalp surface when it was made),
/// with the same layout, units and reference as [`lead_field`].
///
/// Errors: fewer than 3 electrodes, no sources, a count mismatch, a
/// non-finite coordinate, a normal that is not of unit length, a source not
/// inside the innermost surface.
pub fn bem_lead_field(
    transfer: &BemTransfer,
    sources: &[Vec3],
    normals: &[Vec3],
    orientation: Orientation,
    reference: Reference,
    progress: &dyn crate::numeric::Progress,
) -> Result<Gain, ForwardError> {
    check_counts(transfer.n_electrodes(), sources, normals)?;
    transfer.check_sources(sources).map_err(ForwardError::Bem)?;
    check_normals(normals)?;
    let column_of = |source: Vec3, column: &mut [Vec3]| -> Result<(), HeadError> {
        transfer.gain_xyz(source, column);
        Ok(())
    };
    assemble(
        transfer.n_electrodes(),
        (sources, normals),
        orientation,
        reference,
        &column_of,
        progress,
    )
}

/// The unit-dipole potentials along x, y, z of one source at every
/// electrode, from a head model.
type ColumnOf<'a> = dyn Fn(Vec3, &mut [Vec3]) -> Result<(), HeadError> + Sync + 'a;

/// The gain matrices from `column_of`, in parallel over chunks of sources,
/// each chunk writing its own columns (the result does not depend on the
/// thread count).
fn assemble(
    n_ch: usize,
    (sources, normals): (&[Vec3], &[Vec3]),
    orientation: Orientation,
    reference: Reference,
    column_of: &ColumnOf<'_>,
    progress: &dyn crate::numeric::Progress,
) -> Result<Gain, ForwardError> {
    let n_src = sources.len();
    let want_xyz = orientation == Orientation::Free;

    let n_chunks = n_src.div_ceil(CHUNK);
    let mut gain = vec![0.0; n_ch * n_src];
    let mut gain_xyz = if want_xyz {
        Some(vec![0.0; n_ch * n_src * 3])
    } else {
        None
    };
    // Split the row-major outputs into, per chunk of sources, one contiguous
    // piece of every channel row, so each parallel task writes its own
    // columns in place.
    let mut gain_parts: Vec<Vec<&mut [f64]>> =
        (0..n_chunks).map(|_| Vec::with_capacity(n_ch)).collect();
    for row in gain.chunks_mut(n_src) {
        for (chunk, piece) in row.chunks_mut(CHUNK).enumerate() {
            gain_parts[chunk].push(piece);
        }
    }
    let mut xyz_parts: Vec<Vec<&mut [f64]>> = (0..n_chunks).map(|_| Vec::new()).collect();
    if let Some(xyz) = gain_xyz.as_mut() {
        for row in xyz.chunks_mut(n_src * 3) {
            for (chunk, piece) in row.chunks_mut(CHUNK * 3).enumerate() {
                xyz_parts[chunk].push(piece);
            }
        }
    }
    let outcomes: Vec<Result<(), ForwardError>> = gain_parts
        .into_par_iter()
        .zip(xyz_parts)
        .enumerate()
        .map(|(chunk, (mut gain_rows, mut xyz_rows))| {
            if progress.cancelled() {
                return Err(ForwardError::Cancelled);
            }
            let start = chunk * CHUNK;
            let end = (start + CHUNK).min(n_src);
            let block = Block {
                sources: &sources[start..end],
                normals: &normals[start..end],
            };
            fill_chunk(
                n_ch,
                column_of,
                block,
                reference,
                &mut gain_rows,
                &mut xyz_rows,
            )
            .map_err(|(offset, inner)| ForwardError::Head {
                index: start + offset,
                inner,
            })?;
            progress.advance(end - start);
            Ok(())
        })
        .collect();
    // Report the first failing chunk, whatever order the threads ran in.
    for outcome in outcomes {
        outcome?;
    }
    Ok(Gain {
        n_channels: n_ch,
        n_sources: n_src,
        gain,
        gain_xyz,
        reference,
    })
}

/// At least 3 electrodes, at least one source, one normal per source.
fn check_counts(
    n_electrodes: usize,
    sources: &[Vec3],
    normals: &[Vec3],
) -> Result<(), ForwardError> {
    if n_electrodes < 3 {
        return Err(ForwardError::TooFewElectrodes {
            count: n_electrodes,
        });
    }
    if sources.is_empty() {
        return Err(ForwardError::NoSources);
    }
    if normals.len() != sources.len() {
        return Err(ForwardError::NormalCount {
            sources: sources.len(),
            normals: normals.len(),
        });
    }
    Ok(())
}

/// Every normal finite and of unit length within 1e-6.
fn check_normals(normals: &[Vec3]) -> Result<(), ForwardError> {
    for (index, n) in normals.iter().enumerate() {
        if !n.iter().all(|v| v.is_finite()) {
            return Err(ForwardError::NotFinite {
                what: "normal",
                index,
            });
        }
        let length = norm(*n);
        if (length - 1.0).abs() > 1e-6 {
            return Err(ForwardError::NormalNotUnit { index, length });
        }
    }
    Ok(())
}

/// Checks every input and returns the electrodes' unit directions.
fn validate(
    head: &SphereHead,
    electrodes: &[Vec3],
    sources: &[Vec3],
    normals: &[Vec3],
) -> Result<Vec<Vec3>, ForwardError> {
    check_counts(electrodes.len(), sources, normals)?;
    let finite = |p: &Vec3| p.iter().all(|v| v.is_finite());
    let mut directions = Vec::with_capacity(electrodes.len());
    for (index, e) in electrodes.iter().enumerate() {
        if !finite(e) {
            return Err(ForwardError::NotFinite {
                what: "electrode",
                index,
            });
        }
        directions.push(
            head.electrode_direction(*e)
                .map_err(|_| ForwardError::ElectrodeAtCenter { index })?,
        );
    }
    let center = head.center();
    let inner = head.inner_radius();
    for (index, s) in sources.iter().enumerate() {
        if !finite(s) {
            return Err(ForwardError::NotFinite {
                what: "source",
                index,
            });
        }
        let distance = norm([s[0] - center[0], s[1] - center[1], s[2] - center[2]]);
        if distance >= inner {
            return Err(ForwardError::SourceOutside {
                index,
                distance_mm: distance * 1e3,
                inner_radius_mm: inner * 1e3,
            });
        }
    }
    check_normals(normals)?;
    Ok(directions)
}

/// The sources of one parallel task and their normals.
struct Block<'a> {
    sources: &'a [Vec3],
    normals: &'a [Vec3],
}

/// Computes the columns of one chunk of sources into its pieces of the
/// output rows (`gain_rows[ch][s]`, `xyz_rows[ch][3 s + axis]`; `xyz_rows` is
/// empty for normal orientation). An error carries the offset of the source
/// within the chunk.
fn fill_chunk(
    n_ch: usize,
    column_of: &ColumnOf<'_>,
    block: Block<'_>,
    reference: Reference,
    gain_rows: &mut [&mut [f64]],
    xyz_rows: &mut [&mut [f64]],
) -> Result<(), (usize, HeadError)> {
    let mut column = vec![[0.0; 3]; n_ch];
    for (s, (source, unit)) in block.sources.iter().zip(block.normals).enumerate() {
        column_of(*source, &mut column).map_err(|e| (s, e))?;
        if reference == Reference::Average {
            // n_ch × 3 row-major: the mean is summed in channel order, the
            // same on every thread.
            average_reference_columns(column.as_flattened_mut(), 3);
        }
        for (g, row) in column.iter().zip(gain_rows.iter_mut()) {
            row[s] = dot(*g, *unit);
        }
        for (g, row) in column.iter().zip(xyz_rows.iter_mut()) {
            row[3 * s..3 * s + 3].copy_from_slice(g);
        }
    }
    Ok(())
}
