//! Contour lines of a sampled field by marching squares, with the cell centre's mean
//! deciding the two saddle cases (common practice, no source).

use std::collections::HashMap;

/// A sampled field on a regular grid: `values[j * nx + i]` at node (i, j); nodes where
/// `inside` is false are not part of the domain and no contour crosses cells touching
/// them.
#[derive(Debug, Clone, Copy)]
pub struct Grid<'a> {
    /// Nodes along x.
    pub nx: usize,
    /// Nodes along y.
    pub ny: usize,
    /// Node values, row-major (`ny` rows of `nx`).
    pub values: &'a [f64],
    /// Which nodes belong to the domain, same layout.
    pub inside: &'a [bool],
}

/// A line segment in grid coordinates (i, j) with fractional positions along cell edges.
pub type Segment = [(f64, f64); 2];

/// The segments of the level set {f = level} over the cells whose four corners are
/// inside. A node counts as above the level when its value is > `level`.
pub fn contour_segments(grid: &Grid<'_>, level: f64) -> Vec<Segment> {
    let mut out = Vec::new();
    if grid.nx < 2
        || grid.ny < 2
        || grid.values.len() < grid.nx * grid.ny
        || grid.inside.len() < grid.nx * grid.ny
    {
        return out;
    }
    let at = |i: usize, j: usize| grid.values[j * grid.nx + i];
    let ok = |i: usize, j: usize| grid.inside[j * grid.nx + i];
    // Where the level crosses the edge from (x1, y1, f1) to (x2, y2, f2).
    let cross = |p1: (f64, f64), f1: f64, p2: (f64, f64), f2: f64| {
        let t = ((level - f1) / (f2 - f1)).clamp(0.0, 1.0);
        (p1.0 + t * (p2.0 - p1.0), p1.1 + t * (p2.1 - p1.1))
    };
    for j in 0..grid.ny - 1 {
        for i in 0..grid.nx - 1 {
            if !(ok(i, j) && ok(i + 1, j) && ok(i + 1, j + 1) && ok(i, j + 1)) {
                continue;
            }
            // Corners: a top-left, b top-right, c bottom-right, d bottom-left.
            let (fa, fb, fc, fd) = (at(i, j), at(i + 1, j), at(i + 1, j + 1), at(i, j + 1));
            let case = (usize::from(fa > level) << 3)
                | (usize::from(fb > level) << 2)
                | (usize::from(fc > level) << 1)
                | usize::from(fd > level);
            if case == 0 || case == 15 {
                continue;
            }
            let (x, y) = (i as f64, j as f64);
            let (pa, pb, pc, pd) = ((x, y), (x + 1.0, y), (x + 1.0, y + 1.0), (x, y + 1.0));
            let top = || cross(pa, fa, pb, fb);
            let right = || cross(pb, fb, pc, fc);
            let bottom = || cross(pd, fd, pc, fc);
            let left = || cross(pa, fa, pd, fd);
            let centre_above = (fa + fb + fc + fd) / 4.0 > level;
            match case {
                1 | 14 => out.push([left(), bottom()]),
                2 | 13 => out.push([bottom(), right()]),
                3 | 12 => out.push([left(), right()]),
                4 | 11 => out.push([top(), right()]),
                6 | 9 => out.push([top(), bottom()]),
                7 | 8 => out.push([left(), top()]),
                // Saddles: b and d above (5) or a and c above (10).
                5 => {
                    if centre_above {
                        out.push([left(), top()]);
                        out.push([bottom(), right()]);
                    } else {
                        out.push([top(), right()]);
                        out.push([left(), bottom()]);
                    }
                }
                _ => {
                    if centre_above {
                        out.push([top(), right()]);
                        out.push([left(), bottom()]);
                    } else {
                        out.push([left(), top()]);
                        out.push([bottom(), right()]);
                    }
                }
            }
        }
    }
    out
}

/// Join segments that share end points (bit-identical, as neighbouring cells compute
/// their shared edge crossing from the same numbers) into polylines.
pub fn chain(segments: &[Segment]) -> Vec<Vec<(f64, f64)>> {
    type Key = (u64, u64);
    let key = |p: (f64, f64)| (p.0.to_bits(), p.1.to_bits());
    let mut at: HashMap<Key, Vec<usize>> = HashMap::new();
    for (k, s) in segments.iter().enumerate() {
        at.entry(key(s[0])).or_default().push(k);
        at.entry(key(s[1])).or_default().push(k);
    }
    let mut used = vec![false; segments.len()];
    // The unused segment at `p` other than the one just taken, and its far end.
    let next = |p: (f64, f64), used: &[bool]| -> Option<(usize, (f64, f64))> {
        let k = *at.get(&key(p))?.iter().find(|&&k| !used[k])?;
        let s = segments[k];
        Some((k, if key(s[0]) == key(p) { s[1] } else { s[0] }))
    };
    let mut lines = Vec::new();
    for start in 0..segments.len() {
        if used[start] {
            continue;
        }
        used[start] = true;
        let mut forward = vec![segments[start][0], segments[start][1]];
        while let Some((k, p)) = next(forward[forward.len() - 1], &used) {
            used[k] = true;
            forward.push(p);
        }
        let mut backward = Vec::new();
        let mut head = forward[0];
        while let Some((k, p)) = next(head, &used) {
            used[k] = true;
            backward.push(p);
            head = p;
        }
        backward.reverse();
        backward.extend(forward);
        lines.push(backward);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_linear_field_gives_a_straight_contour_at_the_right_place() {
        // f(i, j) = i on a 5 × 4 grid: the level 2.5 is the line i = 2.5 (exact).
        let (nx, ny) = (5, 4);
        let values: Vec<f64> = (0..nx * ny).map(|k| (k % nx) as f64).collect();
        let inside = vec![true; nx * ny];
        let grid = Grid {
            nx,
            ny,
            values: &values,
            inside: &inside,
        };
        let segments = contour_segments(&grid, 2.5);
        assert_eq!(segments.len(), ny - 1);
        for s in segments {
            assert!(s.iter().all(|p| (p.0 - 2.5).abs() < 1e-12));
        }
    }

    #[test]
    fn cells_outside_the_domain_have_no_contour() {
        let (nx, ny) = (3, 3);
        let values: Vec<f64> = (0..9).map(|k| (k % 3) as f64).collect();
        let inside = vec![false; 9];
        let grid = Grid {
            nx,
            ny,
            values: &values,
            inside: &inside,
        };
        assert!(contour_segments(&grid, 0.5).is_empty());
    }

    #[test]
    fn a_circle_chains_into_one_closed_line() {
        // f = distance from the centre of a 21 × 21 grid; the level 6.3 (no node
        // on it) is a closed curve.
        let n = 21;
        let values: Vec<f64> = (0..n * n)
            .map(|k| (((k % n) as f64 - 10.0).powi(2) + ((k / n) as f64 - 10.0).powi(2)).sqrt())
            .collect();
        let inside = vec![true; n * n];
        let grid = Grid {
            nx: n,
            ny: n,
            values: &values,
            inside: &inside,
        };
        let segments = contour_segments(&grid, 6.3);
        let lines = chain(&segments);
        assert_eq!(lines.len(), 1);
        let line = &lines[0];
        assert_eq!(line.len(), segments.len() + 1);
        assert_eq!(line[0], line[line.len() - 1]);
        // Linear interpolation along cell edges of a distance field that curves within a
        // cell: tolerance 0.05 cells (common practice, no source).
        for p in line {
            assert!(((p.0 - 10.0).hypot(p.1 - 10.0) - 6.3).abs() < 0.05);
        }
    }
}
