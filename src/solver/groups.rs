//! Groups of atoms: a validated partition of the atom indices.

use super::error::SolverError;

/// A partition of the atoms into groups (one group per patch: its orientation
/// or scale variants). A group's atoms need not be contiguous.
///
/// Stored compressed: the atoms of group `g` are
/// `atoms[offsets[g]..offsets[g + 1]]`, in increasing atom order.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Groups {
    group_of_atom: Vec<usize>,
    offsets: Vec<usize>,
    atoms: Vec<usize>,
}

impl Groups {
    /// Validates the group index of every atom (`/dictionary/group`) against
    /// `n_groups`: every index must lie in `0..n_groups` and every group must
    /// have at least one atom.
    pub fn new(n_groups: usize, group_of_atom: &[i64]) -> Result<Self, SolverError> {
        if group_of_atom.is_empty() {
            return Err(SolverError::EmptyDimension { what: "n_atoms" });
        }
        if n_groups == 0 {
            return Err(SolverError::EmptyDimension { what: "n_groups" });
        }
        let mut groups = Vec::with_capacity(group_of_atom.len());
        let mut counts = vec![0usize; n_groups];
        for (atom, &g) in group_of_atom.iter().enumerate() {
            let valid = usize::try_from(g).ok().filter(|&g| g < n_groups);
            let Some(g) = valid else {
                return Err(SolverError::GroupOutOfRange {
                    atom,
                    group: g,
                    n_groups,
                });
            };
            counts[g] += 1;
            groups.push(g);
        }
        if let Some(group) = counts.iter().position(|&c| c == 0) {
            return Err(SolverError::EmptyGroup { group });
        }
        let mut offsets = Vec::with_capacity(n_groups + 1);
        offsets.push(0);
        for c in &counts {
            offsets.push(offsets[offsets.len() - 1] + c);
        }
        let mut next = offsets[..n_groups].to_vec();
        let mut atoms = vec![0; groups.len()];
        for (atom, &g) in groups.iter().enumerate() {
            atoms[next[g]] = atom;
            next[g] += 1;
        }
        Ok(Self {
            group_of_atom: groups,
            offsets,
            atoms,
        })
    }

    /// Like [`Groups::new`] with `n_groups` = largest index + 1.
    pub fn from_assignment(group_of_atom: &[i64]) -> Result<Self, SolverError> {
        let n_groups = group_of_atom.iter().copied().max().unwrap_or(-1) + 1;
        Self::new(usize::try_from(n_groups.max(1)).unwrap_or(1), group_of_atom)
    }

    /// One group per atom (the plain multi-task LASSO).
    pub fn singletons(n_atoms: usize) -> Result<Self, SolverError> {
        let assignment: Vec<i64> = (0..n_atoms as i64).collect();
        Self::new(n_atoms, &assignment)
    }

    /// Number of groups.
    pub fn n_groups(&self) -> usize {
        self.offsets.len() - 1
    }

    /// Number of atoms.
    pub fn n_atoms(&self) -> usize {
        self.group_of_atom.len()
    }

    /// The atoms of group `g`, increasing (panics if `g` is out of range).
    pub fn atoms(&self, g: usize) -> &[usize] {
        &self.atoms[self.offsets[g]..self.offsets[g + 1]]
    }

    /// The group of every atom.
    pub fn group_of_atom(&self) -> &[usize] {
        &self.group_of_atom
    }
}
