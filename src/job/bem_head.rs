//! The head of a run as a conductor model: concentric spheres, or a
//! boundary-element head read from its surfaces (checked, hashed by
//! content, its factorised system built once and cached).

use std::path::Path;

use super::error::{JobError, JobResult};
use super::keyed_lock::with_entry_lock;
use super::observer::{staged, JobObserver};
use crate::geometry::{Mesh, SourceSpace};
use crate::head::bem::{check_sources_inside, BemError, BemGeometry, BemSystem};
use crate::head::{HeadSpec, SphereHead};
use crate::io::bem_file::{read_bem_system, write_bem_system};
use crate::io::cache::{entry_path, ContentHash};
use crate::io::cache_entries::read_held_entry;
use crate::io::sources_file::read_surface;

/// The conductor model of a run.
#[derive(Debug, Clone, PartialEq)]
pub enum HeadModel {
    /// Concentric spheres (the default).
    Spheres(SphereHead),
    /// Nested surfaces (`model = "bem"` in a head file).
    Bem(BemHead),
}

/// A boundary-element head as read from a head file: its checked surfaces
/// and the file form with the surfaces' content hash.
#[derive(Debug, Clone, PartialEq)]
pub struct BemHead {
    /// The checked surfaces and conductivities.
    pub geometry: BemGeometry,
    /// The head file's form, `surfaces_hash` filled in.
    pub spec: HeadSpec,
}

impl HeadModel {
    /// The JSON `head_model` attribute (and lead-field cache key) of this
    /// head.
    pub fn head_model_json(&self) -> String {
        match self {
            HeadModel::Spheres(h) => h.head_model_json(),
            HeadModel::Bem(b) => b.spec.to_json(),
        }
    }

    /// The sphere head, when this is one.
    pub fn spheres(&self) -> Option<&SphereHead> {
        match self {
            HeadModel::Spheres(h) => Some(h),
            HeadModel::Bem(_) => None,
        }
    }
}

/// Reads and checks the surfaces of a bem head file at `path` (surface
/// paths relative to its folder), with the reorientations and the gaps
/// between the surfaces as notes.
pub fn load_bem_head(
    mut spec: HeadSpec,
    path: &Path,
    observer: &dyn JobObserver,
) -> Result<BemHead, JobError> {
    let folder = path.parent().unwrap_or(Path::new(""));
    let context = format!("head model {}", path.display());
    let mut meshes = Vec::with_capacity(spec.surfaces.len());
    for name in &spec.surfaces {
        let file = folder.join(name);
        if !file.is_file() {
            return Err(JobError::input(format!(
                "{context}: surface {name} ({}) is not a file",
                file.display()
            )));
        }
        let mesh = read_surface(&file, "surface file kind", "")
            .input(format!("{context}: reading surface {name}"))?;
        meshes.push(mesh);
    }
    let (geometry, notes) =
        BemGeometry::new(meshes, spec.surfaces.clone(), spec.conductivities.clone())
            .input(&context)?;
    for line in &notes.reoriented {
        observer.note(line);
    }
    if !notes.gaps_m.is_empty() {
        let gaps: Vec<String> = notes
            .gaps_m
            .iter()
            .map(|g| format!("{:.1}", g * 1e3))
            .collect();
        observer.note(&format!(
            "note: {}: {} surfaces of {} vertices in all, nested; smallest gaps between neighbours {} mm",
            path.display(),
            geometry.surfaces().len(),
            geometry.n_vertices(),
            gaps.join(", ")
        ));
    }
    spec.surfaces_hash = Some(geometry_hash(&geometry));
    Ok(BemHead { geometry, spec })
}

/// The template head of our own (`--head template-bem`): its three
/// surfaces built and checked, with a note of their sizes.
pub fn template_bem_head(observer: &dyn JobObserver) -> Result<BemHead, JobError> {
    use crate::head::template_head::{
        template_head_surfaces, TEMPLATE_BEM_NAME, TEMPLATE_HEAD_CONDUCTIVITIES,
        TEMPLATE_HEAD_SURFACES,
    };
    let names: Vec<String> = TEMPLATE_HEAD_SURFACES
        .iter()
        .map(|s| s.to_string())
        .collect();
    let conductivities = TEMPLATE_HEAD_CONDUCTIVITIES.to_vec();
    let (geometry, _notes) = BemGeometry::new(
        template_head_surfaces(),
        names.clone(),
        conductivities.clone(),
    )
    .map_err(|e| JobError::compute(format!("the {TEMPLATE_BEM_NAME} head: {e}")))?;
    observer.note(&format!(
        "note: head {TEMPLATE_BEM_NAME}: inner skull, outer skull and scalp of {} vertices, conductivities {:?} S/m (docs/head_model.md)",
        geometry
            .surfaces()
            .iter()
            .map(|m| m.n_vertices().to_string())
            .collect::<Vec<_>>()
            .join(", "),
        conductivities
    ));
    let spec = HeadSpec {
        model: crate::head::HeadModelKind::Bem,
        radii_mm: Vec::new(),
        surfaces: names,
        surfaces_hash: Some(geometry_hash(&geometry)),
        conductivities,
        center_mm: None,
        landmarks_mm: None,
    };
    Ok(BemHead { geometry, spec })
}

/// The content hash of checked surfaces (as turned outward) and their
/// conductivities: the key of the factorised system in the cache. The
/// tag names the formulation too (v2: Galerkin rows on the outer surfaces),
/// so that systems and lead fields of an earlier one are not reused.
fn geometry_hash(geometry: &BemGeometry) -> String {
    let mut h = ContentHash::new("bem-geometry-v2");
    for mesh in geometry.surfaces() {
        let Mesh {
            vertices,
            triangles,
        } = mesh;
        h.f64s(&vertices.iter().flatten().copied().collect::<Vec<_>>());
        h.u64s(
            &triangles
                .iter()
                .flatten()
                .map(|&v| u64::from(v))
                .collect::<Vec<_>>(),
        );
    }
    h.f64s(geometry.conductivities());
    h.hex()
}

/// Refuses sources outside the innermost surface, before any lead field.
pub fn check_bem_sources(head: &BemHead, sources: &SourceSpace) -> Result<(), JobError> {
    let inner = &head.geometry.surfaces()[0];
    let name = &head.geometry.names()[0];
    check_sources_inside(inner, name, &sources.positions).input(format!(
        "the sources do not fit inside the head (check their units, mm, and frame, or the surfaces of {})",
        head.spec.surfaces.join(", ")
    ))
}

/// The factorised system of `head`, from `cache` when an entry for the
/// same surfaces and conductivities is there (and intact), else built with
/// its progress and cached (a cache that cannot be written costs a note).
pub fn bem_system(
    head: &BemHead,
    cache: Option<&Path>,
    observer: &dyn JobObserver,
) -> Result<BemSystem, JobError> {
    let hash = head
        .spec
        .surfaces_hash
        .clone()
        .unwrap_or_else(|| geometry_hash(&head.geometry));
    let build = || {
        let n = head.geometry.n_vertices();
        // Measured 22-25 s for 7 686 vertices on 2 shared cores with
        // collocation, 31-38 s with the Galerkin rows under load 6-7 (27 s
        // CPU; docs/benchmarks.md); the factorisation grows like N³.
        let largest = head
            .geometry
            .surfaces()
            .iter()
            .map(Mesh::n_vertices)
            .max()
            .unwrap_or(0);
        let advice = if largest > 5000 {
            format!(
                "; a surface has {largest} vertices: decimating each to about 2 500 keeps the accuracy of docs/head_model.md and is far faster"
            )
        } else {
            String::new()
        };
        observer.note(&format!(
            "building the boundary-element system once for these surfaces ({n} vertices in all; expect about {:.0} s on 2 cores{advice})",
            ((n as f64 / 7686.0).powi(3) * 30.0).max(1.0)
        ));
        staged(observer, "boundary-element system", n, |progress| {
            BemSystem::build(head.geometry.clone(), progress)
        })
        .map_err(|e| match e {
            BemError::TooLarge { .. } => JobError::input(e.to_string()),
            other => JobError::compute(other.to_string()),
        })
    };
    let Some(cache) = cache else {
        return build();
    };
    let path = entry_path(cache, "bem", &hash);
    // The entry's build lock is a file in the cache folder.
    let _ = std::fs::create_dir_all(cache);
    with_entry_lock(&path, || {
        match read_held_entry(&path, read_bem_system) {
            Some(Ok(parts)) => {
                if let Some(system) = BemSystem::from_parts(head.geometry.clone(), parts) {
                    observer.note(&format!(
                        "using cached boundary-element system {}",
                        path.display()
                    ));
                    return Ok(system);
                }
                observer.note("note: the cached boundary-element system does not fit the surfaces; rebuilding it");
            }
            Some(Err(e)) => observer.note(&format!(
                "note: the cached boundary-element system is damaged ({e}); rebuilding it"
            )),
            None => {}
        }
        let system = build()?;
        let vertices: Vec<usize> = head
            .geometry
            .surfaces()
            .iter()
            .map(Mesh::n_vertices)
            .collect();
        // The arrays go to the writer and come back, so that the system is
        // not held twice while the file is encoded.
        let (geometry, parts) = system.into_parts();
        let (written, parts) = match std::fs::create_dir_all(cache) {
            Ok(()) => {
                let (written, parts) = write_bem_system(&path, parts, &vertices);
                (written.map_err(|e| e.to_string()), parts)
            }
            Err(e) => (Err(e.to_string()), parts),
        };
        let system = BemSystem::from_parts(geometry, parts).ok_or_else(|| {
            JobError::compute(
                "the boundary-element system did not survive writing its cache entry (a bug)",
            )
        })?;
        match written {
            Ok(()) => observer.note(&format!(
                "built and cached boundary-element system {}",
                path.display()
            )),
            Err(e) => observer.note(&format!(
                "note: could not cache the boundary-element system in {}: {e}",
                cache.display()
            )),
        }
        Ok(system)
    })
}

/// The surface files a bem head file names (resolved against its folder),
/// for the check that an output holds no input; empty for the default head,
/// a spheres file, or a head file that does not read (its reader reports
/// that later).
pub fn head_surface_files(choice: &super::specs::HeadChoice) -> Vec<std::path::PathBuf> {
    let super::specs::HeadChoice::File(path) = choice else {
        return Vec::new();
    };
    let Ok(text) = crate::io::input::read_input_string(path) else {
        return Vec::new();
    };
    match HeadSpec::from_toml_str(&text, &path.display().to_string()) {
        Ok(spec) if spec.model == crate::head::HeadModelKind::Bem => {
            let folder = path.parent().unwrap_or(Path::new(""));
            spec.surfaces.iter().map(|name| folder.join(name)).collect()
        }
        _ => Vec::new(),
    }
}
