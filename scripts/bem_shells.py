"""Three nested icosphere surfaces and a boundary-element head file, for the
per-task measurements of docs/cluster.md ("Memory and time per task").

    python scripts/bem_shells.py OUT [subdivisions]

writes OUT/inner_skull.off, OUT/outer_skull.off, OUT/scalp.off (radii 83, 88
and 94 mm about the origin, the default head's skull and scalp radii; OFF,
millimetres) and OUT/head.toml (model = "bem", conductivities 0.47, 0.02 and
0.41 S/m, the default head's brain, skull and scalp values). Subdivisions 4
(the default) gives 2562 vertices per surface, 7686 in all. The icosphere:
each triangle of an icosahedron split into four, new vertices pushed onto the
sphere (common practice, no source). Needs NumPy only.
"""

import os
import sys

import numpy as np


def icosphere(level):
    t = (1 + 5 ** 0.5) / 2
    v = [(-1, t, 0), (1, t, 0), (-1, -t, 0), (1, -t, 0), (0, -1, t), (0, 1, t),
         (0, -1, -t), (0, 1, -t), (t, 0, -1), (t, 0, 1), (-t, 0, -1), (-t, 0, 1)]
    f = [(0, 11, 5), (0, 5, 1), (0, 1, 7), (0, 7, 10), (0, 10, 11), (1, 5, 9), (5, 11, 4),
         (11, 10, 2), (10, 7, 6), (7, 1, 8), (3, 9, 4), (3, 4, 2), (3, 2, 6), (3, 6, 8),
         (3, 8, 9), (4, 9, 5), (2, 4, 11), (6, 2, 10), (8, 6, 7), (9, 8, 1)]
    verts = [np.array(p, float) / np.linalg.norm(p) for p in v]
    for _ in range(level):
        mid = {}

        def middle(a, b):
            key = (min(a, b), max(a, b))
            if key not in mid:
                p = verts[a] + verts[b]
                verts.append(p / np.linalg.norm(p))
                mid[key] = len(verts) - 1
            return mid[key]

        f = [tri for a, b, c in f for tri in (
            (a, middle(a, b), middle(c, a)), (b, middle(b, c), middle(a, b)),
            (c, middle(c, a), middle(b, c)), (middle(a, b), middle(b, c), middle(c, a)))]
    return np.array(verts), np.array(f)


def main(out, level=4):
    os.makedirs(out, exist_ok=True)
    v, f = icosphere(level)
    names = ["inner_skull.off", "outer_skull.off", "scalp.off"]
    for name, r in zip(names, (83.0, 88.0, 94.0)):
        with open(os.path.join(out, name), "w") as h:
            h.write(f"OFF\n{len(v)} {len(f)} 0\n")
            h.writelines(f"{x:.9f} {y:.9f} {z:.9f}\n" for x, y, z in v * r)
            h.writelines(f"3 {a} {b} {c}\n" for a, b, c in f)
    with open(os.path.join(out, "head.toml"), "w") as h:
        h.write('model = "bem"\nsurfaces = ["inner_skull.off", "outer_skull.off", "scalp.off"]\n'
                "conductivities = [0.47, 0.02, 0.41]\n")
    print(f"{out}: 3 surfaces of {len(v)} vertices, head.toml")


if __name__ == "__main__":
    main(sys.argv[1], int(sys.argv[2]) if len(sys.argv) > 2 else 4)
