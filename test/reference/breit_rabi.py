#!/usr/bin/python3
"""Independent reference for Spinyard's Zeeman levels (src/physics/hyperfine.ts).

Builds H/h = A I.J + (muB/h)(g_J J + g_I I).B on the full |m_I, m_J> space with QuTiP's jmat
(numpy fallback), for the field B along an arbitrary axis n (no m_F blocks, no rotation), and
diagonalises it with numpy.linalg.eigh. Moments are -<k| g_J J.n + g_I I.n |k> (Hellmann-Feynman).
Writes test/fixtures/species/levels_<species>.json: per (field, axis) the ascending eigenvalues (Hz)
and the moments (muB) in the same order, with the minimum level gap (the test compares level by level,
so the points are chosen away from crossings).
Parameters: reference-data.md section 1 (Rb-87: Steck via pylcp/ElecSus; Cs-133: SI second;
Na-23: pylcp/ElecSus); muB/h = 1.39962449361e10 Hz/T (CODATA 2018).
Run: /usr/bin/python3 test/reference/breit_rabi.py
"""
import json
import os

import numpy as np

try:
    import qutip

    def jmat(j, which):
        return np.asarray(qutip.jmat(j, which).full())

    BACKEND = f"qutip {qutip.__version__} jmat + numpy {np.__version__} eigh"
except ImportError:  # pragma: no cover
    def jmat(j, which):
        m = np.arange(j, -j - 1, -1)
        d = len(m)
        jp = np.zeros((d, d))
        for k in range(1, d):
            jp[k - 1, k] = np.sqrt(j * (j + 1) - m[k] * (m[k] + 1))
        if which == "x":
            return (jp + jp.T) / 2
        if which == "y":
            return (jp - jp.T) / 2j
        return np.diag(m)

    BACKEND = f"numpy {np.__version__} (own jmat) eigh"

MUB_H = 1.39962449361e10
SPECIES = {
    "Rb-87": dict(I=1.5, J=0.5, gJ=2.00233113, gI=-0.0009951414, A=3417.341305452145e6),
    "Cs-133": dict(I=3.5, J=0.5, gJ=2.00254032, gI=-0.00039885395, A=9192631770 / 4),
    "Na-23": dict(I=1.5, J=0.5, gJ=2.00229600, gI=-0.00080461080, A=885.8130644e6),
}
FIELDS = [1e-4, 3e-3, 0.05, 0.8, 1.7]
AXES = [(0.0, 0.0, 1.0), (np.sin(0.7), 0.0, np.cos(0.7)), (0.36, 0.48, 0.8)]


def levels(p, b, n):
    I, J = p["I"], p["J"]
    di, dj = int(2 * I + 1), int(2 * J + 1)
    ii, ij = np.eye(di), np.eye(dj)
    Iop = [np.kron(jmat(I, a), ij) for a in "xyz"]
    Jop = [np.kron(ii, jmat(J, a)) for a in "xyz"]
    idotj = sum(Iop[k] @ Jop[k] for k in range(3))
    dh = sum(n[k] * (p["gJ"] * Jop[k] + p["gI"] * Iop[k]) for k in range(3))  # dH/dB / muB
    h = p["A"] * idotj + MUB_H * b * dh
    w, v = np.linalg.eigh(h)
    mom = [-float(np.real(np.vdot(v[:, k], dh @ v[:, k]))) for k in range(len(w))]
    return [float(x) for x in w], mom


def main():
    out_dir = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "fixtures", "species")
    os.makedirs(out_dir, exist_ok=True)
    for name, p in SPECIES.items():
        points = []
        for b in FIELDS:
            for n in AXES:
                nn = np.array(n) / np.linalg.norm(n)
                e, m = levels(p, b, nn)
                points.append(dict(field_T=b, axis=[float(x) for x in nn], energies_Hz=e, moments_muB=m,
                                   min_gap_Hz=float(np.min(np.diff(e)))))
        doc = dict(species=name, generator="test/reference/breit_rabi.py", backend=BACKEND,
                   hamiltonian="A I.J + (muB/h)(gJ J + gI I).B, full space, numpy.linalg.eigh",
                   params=dict(i2=int(2 * p["I"]), j2=int(2 * p["J"]), gJ=p["gJ"], gI=p["gI"], aHz=p["A"]),
                   muB_over_h=MUB_H, points=points)
        path = os.path.join(out_dir, f"levels_{name}.json")
        with open(path, "w") as f:
            json.dump(doc, f, indent=1)
            f.write("\n")
        print(path, len(points), "points; min gap", min(pt["min_gap_Hz"] for pt in points), "Hz")


if __name__ == "__main__":
    main()
