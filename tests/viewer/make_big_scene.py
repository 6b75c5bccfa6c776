#!/usr/bin/env python3
"""Writes a keyframed 3-axis scene with N waypoints (default 100000) for measuring the viewer's
frame time: python3 make_big_scene.py N OUT.yaml, then
c2path-view OUT.yaml --screenshot big.png --frames 60 --timing (under xvfb-run)."""
import math
import sys

n = int(sys.argv[1]) if len(sys.argv) > 1 else 100000
out = sys.argv[2] if len(sys.argv) > 2 else "big_scene.yaml"
with open(out, "w") as f:
    f.write("format: 1\nname: %d waypoints (frame time measurement)\n" % n)
    f.write("rig:\n  axes:\n")
    f.write("    - {name: x, unit: m, min: -2, max: 2, vel: 0.8, acc: 2.0, jerk: 20}\n")
    f.write("    - {name: y, unit: m, min: -2, max: 2, vel: 0.8, acc: 2.0, jerk: 20}\n")
    f.write("    - {name: z, unit: m, min: -1, max: 1, vel: 0.5, acc: 2.0, jerk: 20}\n")
    f.write("path:\n  ends: natural\ntiming:\n  mode: keyframes\nwaypoints:\n")
    for k in range(n):
        t = 0.1 * k
        a = 2 * math.pi * k / n
        r = 1.0 + 0.3 * math.sin(37 * a)
        f.write("  - {t: %.1f, x: %.6f, y: %.6f, z: %.6f}\n" % (t, r * math.cos(5 * a), r * math.sin(5 * a), 0.6 * math.sin(3 * a)))
