//! The source space: positions, normals, areas, triangles and regions of
//! the cortical sources a lead field is computed for.

use super::mesh::{Mesh, Vec3};
use super::template::Template;

/// Cortical sources (SI units): one source per mesh vertex when made from a
/// mesh, or points without triangles when brought as a table.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SourceSpace {
    /// Source positions (m).
    pub positions: Vec<Vec3>,
    /// Unit normals (outward from the cortex).
    pub normals: Vec<Vec3>,
    /// Area represented by each source (m²).
    pub areas: Vec<f64>,
    /// Triangles (0-based); empty when the sources are a point set.
    pub triangles: Vec<[u32; 3]>,
    /// Region of each source, index into `region_names`; -1 = none.
    pub region: Vec<i32>,
    /// Region names.
    pub region_names: Vec<String>,
}

impl SourceSpace {
    /// Sources at the vertices of a mesh: area-weighted normals, vertex
    /// areas, no regions.
    pub fn from_mesh(mesh: &Mesh) -> SourceSpace {
        SourceSpace {
            positions: mesh.vertices.clone(),
            normals: mesh.vertex_normals(),
            areas: mesh.vertex_areas(),
            triangles: mesh.triangles.clone(),
            region: vec![-1; mesh.n_vertices()],
            region_names: Vec::new(),
        }
    }

    /// The template cortex as a source space: one source per vertex (as
    /// [`SourceSpace::from_mesh`]) with the template's regions.
    pub fn from_template(template: &Template) -> SourceSpace {
        SourceSpace {
            region: template.region.clone(),
            region_names: template.region_names.clone(),
            ..SourceSpace::from_mesh(&template.mesh)
        }
    }

    /// Number of sources.
    pub fn len(&self) -> usize {
        self.positions.len()
    }

    /// True when there are no sources.
    pub fn is_empty(&self) -> bool {
        self.positions.is_empty()
    }

    /// The triangle mesh of the sources (empty triangles for a point set).
    pub fn mesh(&self) -> Mesh {
        Mesh {
            vertices: self.positions.clone(),
            triangles: self.triangles.clone(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::{template, TemplateResolution};

    // Common practice, no source: the template as a source space is its mesh
    // as sources plus its regions, vertex for vertex.
    #[test]
    fn template_sources_carry_its_regions() {
        let t = template(TemplateResolution::Low);
        let s = SourceSpace::from_template(&t);
        let plain = SourceSpace::from_mesh(&t.mesh);
        assert_eq!(s.len(), t.mesh.n_vertices());
        assert_eq!(s.positions, plain.positions);
        assert_eq!(s.normals, plain.normals);
        assert_eq!(s.areas, plain.areas);
        assert_eq!(s.triangles, plain.triangles);
        assert_eq!(s.region, t.region);
        assert_eq!(s.region_names, t.region_names);
        assert!(s.region.iter().all(|&r| r >= 0));
    }
}
