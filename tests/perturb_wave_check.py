"""Check a linear sound wave against the linearised Euler equations with SymPy.

For each point of each case (background rho0, P0 at that point; wave vector
k; amplitude A; phase), SymPy linearises the inviscid Euler equations with
an adiabatic energy equation (e.g. Landau & Lifshitz, Fluid Mechanics, 2nd
ed., section 64) about a uniform state, takes the plane-wave ansatz
q = q_hat exp(i (k.x - w t)), finds the dispersion relation det M(w) = 0 and
the eigenvector of the forward wave w = +c|k|, normalised to
drho/rho0 = A, and compares the library's values with
Re(q_hat exp(i (k.x + phase))). It also substitutes the fields built from
the library's amplitudes into the linearised equations as functions of
(x, y, z, t) and checks that the residual simplifies to zero. Exit status 1
on any disagreement.
"""

import json
import sys

import sympy as sp


def main(path):
    data = json.load(open(path))
    failures = 0
    x, y, z, t = sp.symbols("x y z t", real=True)
    w = sp.symbols("omega")
    for case in data["cases"]:
        gamma = sp.nsimplify(case["gamma"])
        k = [sp.Rational(c) for c in case["k"]]
        kn = sp.sqrt(sum(c * c for c in k))
        amp, phase = case["amplitude"], case["phase"]
        for p in case["points"]:
            rho0, p0 = sp.Rational(p["rho0"]), sp.Rational(p["P0"])
            # Unknowns (drho, dvx, dvy, dvz, dP) times exp(i(k.x - w t)):
            #   -i w drho + i rho0 k.dv = 0
            #   -i w rho0 dv + i k dP = 0
            #   -i w dP + i gamma P0 k.dv = 0
            m = sp.Matrix(
                [
                    [-w, rho0 * k[0], rho0 * k[1], rho0 * k[2], 0],
                    [0, -w * rho0, 0, 0, k[0]],
                    [0, 0, -w * rho0, 0, k[1]],
                    [0, 0, 0, -w * rho0, k[2]],
                    [0, gamma * p0 * k[0], gamma * p0 * k[1], gamma * p0 * k[2], -w],
                ]
            )
            roots = sp.solve(sp.Eq(m.det(), 0), w)
            c = sp.sqrt(gamma * p0 / rho0)
            forward = [r for r in roots if abs(sp.N(r - c * kn, 30)) < 1e-25 * abs(sp.N(c * kn, 30))]
            if not forward:
                print(f"no forward root c|k| among {roots}")
                failures += 1
                continue
            null = m.subs(w, forward[0]).nullspace()
            vec = null[0] / null[0][0] * rho0 * amp
            theta = k[0] * p["x"] + k[1] * p["y"] + k[2] * p["z"] + phase
            want = [sp.N(v * sp.cos(theta), 20) for v in vec]
            got = [p["drho"], *p["dv"], p["dP"]]
            scale = [abs(want[0]) + 1e-300, *([max(abs(v) for v in want[1:4]) + 1e-300] * 3), abs(want[4]) + 1e-300]
            scale = [max(s, 1e-12 * amp * float(sp.N(rho0 * c))) for s in scale]
            for name, g, ww, s in zip(["drho", "dvx", "dvy", "dvz", "dP"], got, want, scale):
                if abs(g - float(ww)) > 1e-12 * s + 1e-13 * abs(float(ww)):
                    print(f"point {p['x']:.3g},{p['y']:.3g},{p['z']:.3g}: {name} = {g!r}, SymPy {float(ww)!r}")
                    failures += 1
            # The fields with the library's amplitudes (values / cos theta)
            # in the linearised equations, as functions of space and time.
            ct = float(sp.N(sp.cos(theta)))
            if abs(ct) < 0.1:
                continue
            a = [sp.Float(v / ct, 20) for v in got]
            ph = k[0] * x + k[1] * y + k[2] * z - c * kn * t + phase
            f = [ai * sp.cos(ph) for ai in a]
            drho, dv, dp = f[0], f[1:4], f[4]
            coords = [x, y, z]
            div = sum(sp.diff(dv[i], coords[i]) for i in range(3))
            res = [sp.diff(drho, t) + rho0 * div]
            res += [rho0 * sp.diff(dv[i], t) + sp.diff(dp, coords[i]) for i in range(3)]
            res += [sp.diff(dp, t) + gamma * p0 * div]
            size = [abs(a[0]) * float(sp.N(c * kn)), *[abs(a[4]) * float(kn)] * 3, abs(a[4]) * float(sp.N(c * kn))]
            for r, s in zip(res, size):
                # The residual is A sin(ph) for a number A: zero to round-off.
                coeff = sp.N(sp.simplify(r / sp.sin(ph)), 20)
                if not coeff.is_number or abs(coeff) > 1e-12 * s:
                    print(f"linearised equation not satisfied: residual {coeff} against {s}")
                    failures += 1
        print(f"case k = {case['k']}: {len(case['points'])} points checked")
    if failures:
        print(f"{failures} disagreements")
        sys.exit(1)
    print("the sound wave satisfies the linearised Euler equations")


if __name__ == "__main__":
    main(sys.argv[1])
