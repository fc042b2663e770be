//! The cache of lead fields and dictionaries: entries keyed by a content
//! hash of everything they are computed from (`io::cache`), built once per
//! key even by parallel batch jobs (a per-key lock), and never the cause of
//! a failed run (a cache that cannot be written costs a note).

use std::path::{Path, PathBuf};

use super::bem_head::HeadModel;
use super::error::{JobError, JobResult};
use super::forward::{build_dictionary, compute_leadfield};
use super::keyed_lock::with_entry_lock;
use super::observer::JobObserver;
use super::params::{ForwardParams, PatchParams};
use super::specs::OrientationChoice;
use crate::dictionary::PatchDictionary;
use crate::forward::{LeadField, Orientation};
use crate::geometry::SourceSpace;
use crate::io::cache::{entry_path, ContentHash};
use crate::io::cache_entries::read_held_entry;
use crate::io::dictionary_file::{read_dictionary, write_dictionary};
use crate::io::leadfield_file::{read_leadfield, write_leadfield};
use crate::montage::Montage;

/// The forward model a dictionary of this run was built from (for the
/// perturbed heads of the resamples).
pub struct ForwardModel {
    /// Montage of the decoder's channels, in the dictionary's channel order.
    pub montage: Montage,
    /// The source space.
    pub sources: SourceSpace,
    /// The head.
    pub head: HeadModel,
    /// Orientation of the lead field.
    pub orientation: Orientation,
    /// The cache folder.
    pub cache: PathBuf,
    /// The cache key of the dictionary built on this model (its profiles
    /// make the perturbed models' atoms, cached under keys derived from it).
    pub dictionary_hash: String,
}

/// The content hash of a lead field: labels, positions, sources, head and
/// orientation.
pub fn leadfield_hash(
    montage: &Montage,
    sources: &SourceSpace,
    head_json: &str,
    orientation: Orientation,
) -> String {
    let flat3 = |v: &[[f64; 3]]| v.iter().flatten().copied().collect::<Vec<_>>();
    let mut h = ContentHash::new("leadfield-v1");
    for l in &montage.labels {
        h.str(l);
    }
    h.f64s(&flat3(&montage.positions));
    h.f64s(&flat3(&sources.positions));
    h.f64s(&flat3(&sources.normals));
    h.f64s(&sources.areas);
    h.u64s(
        &sources
            .triangles
            .iter()
            .flatten()
            .map(|&v| v as u64)
            .collect::<Vec<_>>(),
    );
    h.u64s(
        &sources
            .region
            .iter()
            .map(|&r| r as i64 as u64)
            .collect::<Vec<_>>(),
    );
    for n in &sources.region_names {
        h.str(n);
    }
    h.str(head_json);
    h.str(if orientation == Orientation::Free {
        "free"
    } else {
        "normal"
    });
    h.hex()
}

/// The dictionary for the decoder's channels `labels`, built or fetched
/// from `cache`; with the cache keys pushed onto `hashes`.
pub fn dictionary_for_channels(
    forward: &ForwardParams,
    patches: &PatchParams,
    labels: &[String],
    cache: &Path,
    hashes: &mut Vec<(String, String)>,
    observer: &dyn JobObserver,
) -> Result<(PatchDictionary, ForwardModel), JobError> {
    let (montage, sources, head) = forward.resolve(Some(labels), observer)?;
    // Without regions every share would be unassigned: refuse before the
    // lead field instead of printing empty tables.
    if !sources.region.iter().any(|&r| r >= 0) {
        return Err(JobError::input(format!(
            "sources {}: no source has a region, so there is nothing to attribute to; pass \
             --regions FILE with one region label per source (a GIFTI label array or a text \
             file with one label a line, in the sources' order)",
            forward.sources
        )));
    }
    let orientation = match patches.atom_orientation {
        OrientationChoice::Normal => Orientation::Normal,
        OrientationChoice::Free => Orientation::Free,
    };
    // A cache that cannot be made or written costs a note, never the run.
    if let Err(e) = std::fs::create_dir_all(cache) {
        observer.note(&format!(
            "note: the cache folder {} cannot be created ({e}); nothing is cached in this run",
            cache.display()
        ));
    }
    // An entry's temporary file from a run killed while writing it (up to a
    // few hundred MB for a 20k dictionary) is of no use to anyone.
    let removed = crate::io::atomic::remove_dead_temporaries(cache, None);
    if removed > 0 {
        observer.note(&format!(
            "removed {removed} temporary file(s) left in {} by a killed run",
            cache.display()
        ));
    }
    let lf_hash = leadfield_hash(&montage, &sources, &head.head_model_json(), orientation);
    // v2: atoms and profile stored as 32-bit floats (v1 entries, 64-bit,
    // are rebuilt, never read under the new key).
    let mut dh = ContentHash::new("dictionary-v2");
    dh.str(&lf_hash).str(&patches.to_json());
    let d_hash = dh.hex();
    hashes.push(("leadfield".to_string(), lf_hash.clone()));
    hashes.push(("dictionary".to_string(), d_hash.clone()));
    // Parallel batch jobs on the same channels, in this process or in other
    // shards, wait here for the first one to build the entry instead of
    // building it again.
    let model = (&montage, &sources, &head);
    let dict = with_entry_lock(&entry_path(cache, "dictionary", &d_hash), || {
        cached_dictionary(
            patches,
            cache,
            (&lf_hash, &d_hash),
            model,
            orientation,
            observer,
        )
    })?;
    Ok((
        dict,
        ForwardModel {
            montage,
            sources,
            head,
            orientation,
            cache: cache.to_path_buf(),
            dictionary_hash: d_hash,
        },
    ))
}

/// The cache entry at `path` (a `what`, e.g. "lead field"), read while
/// held: `Some` when it reads (noted as used), `None` when there is none or
/// it is damaged (noted: the caller rebuilds it).
pub(super) fn read_cached<T>(
    path: &Path,
    what: &str,
    read: impl FnOnce(&Path) -> Result<T, crate::io::IoError>,
    observer: &dyn JobObserver,
) -> Option<T> {
    match read_held_entry(path, read) {
        Some(Ok(entry)) => {
            observer.note(&format!("using cached {what} {}", path.display()));
            Some(entry)
        }
        Some(Err(e)) => {
            observer.note(&format!(
                "note: the cached {what} is damaged ({e}); rebuilding it"
            ));
            None
        }
        None => None,
    }
}

/// The lead field entry `lf_hash` from the cache, computed (and cached when
/// the cache can be written) when missing or unreadable.
pub fn cached_leadfield(
    cache: &Path,
    lf_hash: &str,
    (montage, sources, head): (&Montage, &SourceSpace, &HeadModel),
    orientation: Orientation,
    observer: &dyn JobObserver,
) -> Result<LeadField, JobError> {
    let lf_path = entry_path(cache, "leadfield", lf_hash);
    with_entry_lock(&lf_path, || {
        if let Some(lf) = read_cached(&lf_path, "lead field", read_leadfield, observer) {
            return Ok(lf);
        }
        let lf = compute_leadfield(montage, sources, head, orientation, Some(cache), observer)?;
        match write_leadfield(&lf_path, &lf) {
            Ok(()) => observer.note(&format!(
                "computed and cached lead field {}",
                lf_path.display()
            )),
            Err(e) => observer.note(&format!(
                "note: could not cache the lead field in {}: {e}",
                cache.display()
            )),
        }
        Ok(lf)
    })
}

/// The dictionary entry `d_hash` from the cache, built (with its lead field
/// `lf_hash`, itself cached) when missing or unreadable.
fn cached_dictionary(
    patches: &PatchParams,
    cache: &Path,
    (lf_hash, d_hash): (&str, &str),
    model: (&Montage, &SourceSpace, &HeadModel),
    orientation: Orientation,
    observer: &dyn JobObserver,
) -> Result<PatchDictionary, JobError> {
    let d_path = entry_path(cache, "dictionary", d_hash);
    if let Some(d) = read_cached(&d_path, "dictionary", read_dictionary, observer) {
        return Ok(d);
    }
    let lf = cached_leadfield(cache, lf_hash, model, orientation, observer)?;
    let (d, _info) = build_dictionary(&lf, patches, observer)?;
    let params = patches.to_json();
    // The fit always uses the dictionary as read back from its file, so a
    // first run and a cached run give the same bits.
    match write_dictionary(&d_path, &lf, &d, &params) {
        Ok(()) => match read_held_entry(&d_path, read_dictionary) {
            Some(read_back) => {
                observer.note(&format!("built and cached dictionary {}", d_path.display()));
                return read_back.compute(format!("reading back {}", d_path.display()));
            }
            // Removed by a `patchwise cache clean` of another process
            // between the write and the read: go on without the cache.
            None => observer.note(&format!(
                "note: the cached dictionary {} was removed while this run wrote it",
                d_path.display()
            )),
        },
        // A read-only or full cache: the dictionary goes through a file of
        // this run's own in the system's temporary folder instead.
        Err(e) => observer.note(&format!(
            "note: could not cache the dictionary in {}: {e}",
            cache.display()
        )),
    }
    let own = crate::io::atomic::temporary_path(
        &std::env::temp_dir().join(format!("patchwise-dictionary-{d_hash}.h5")),
    );
    let read_back = write_dictionary(&own, &lf, &d, &params)
        .and_then(|()| read_dictionary(&own))
        .compute("building the dictionary without a cache");
    let _ = std::fs::remove_file(&own);
    read_back
}
