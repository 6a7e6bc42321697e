#!/usr/bin/env python3
"""Regenerate tests/fixtures/thermo_states.json: cubic-EOS states computed by `thermo`.

For each state (pure gases and mixtures of 2 to 10 catalogue gases, 1 to 300 bar, 200 to
400 K) and each model (ideal, vdw, rk, srk, pr), thermo's mixture EOS with the same Tc, Pc,
omega and k_ij gives the compressibility factor, molar volume and ln(phi_i) of the stable
root (the lower residual Gibbs energy where liquid and vapour roots both exist).
The van der Waals model here uses a and b from Tc and Pc, as thermo does.

Run:  pip install thermo==0.6.1 && python3 tests/reference/make_thermo_fixture.py
"""
import json
import os
import random
import sys

import chemicals
import thermo
from thermo.eos_mix import IGMIX, PRMIX, RKMIX, SRKMIX, VDWMIX

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
sys.path.insert(0, os.path.join(ROOT, "tools"))
import make_catalogue as mc  # noqa: E402

from chemicals import acentric, critical  # noqa: E402


def constants(gid):
    row = next(r for r in mc.GASES if r[0] == gid)
    cas = row[1]
    m = mc.critical_method(gid, cas)
    o = mc.omega_method(gid, cas)
    return critical.Tc(cas, method=m), critical.Pc(cas, method=m), acentric.omega(cas, method=o)


def kij_matrix(ids):
    return mc.kij_matrix([next(r[1] for r in mc.GASES if r[0] == g) for g in ids])


def stable(eos):
    have_g = hasattr(eos, "Z_g")
    have_l = hasattr(eos, "Z_l")
    if have_g and have_l:
        use_l = eos.G_dep_l < eos.G_dep_g
    else:
        use_l = have_l
    if use_l:
        return eos.Z_l, eos.V_l, list(eos.lnphis_l), "liquid" if have_g else "single"
    return eos.Z_g, eos.V_g, list(eos.lnphis_g), "vapour" if have_l else "single"


def main():
    rng = random.Random(20261201)
    pool = ["N2", "O2", "Ar", "He", "H2", "CO", "CO2", "CH4", "C2H6", "C3H8", "n-C4H10",
            "i-C4H10", "H2S", "SO2", "NO", "N2O", "SF6", "Ne", "C2H4", "NH3", "Kr", "Xe"]
    states = []
    for gid in ["N2", "CH4", "CO2", "Ar", "He", "H2", "C3H8", "SF6", "O2", "C2H6"]:
        for _ in range(2):
            states.append(([gid], [1.0], rng.uniform(200, 400), rng.uniform(1, 300) * 1e5))
    for ncomp in range(2, 11):
        for _ in range(5):
            ids = rng.sample(pool, ncomp)
            w = [rng.uniform(0.01, 1.0) for _ in ids]
            s = sum(w)
            states.append((ids, [v / s for v in w], rng.uniform(200, 400), rng.uniform(1, 300) * 1e5))
    out = []
    for ids, zs, T, P in states:
        tcs, pcs, omegas = zip(*[constants(g) for g in ids])
        kij_pr = kij_matrix(ids)
        zero = [[0.0] * len(ids) for _ in ids]
        entry = {"ids": ids, "x": zs, "temperature_k": T, "pressure_pa": P,
                 "tc_k": list(tcs), "pc_pa": list(pcs), "omega": list(omegas),
                 "kij_pr": kij_pr, "models": {}}
        makers = {
            "ideal": lambda: IGMIX(Tcs=tcs, Pcs=pcs, omegas=omegas, zs=zs, T=T, P=P),
            "vdw": lambda: VDWMIX(Tcs=tcs, Pcs=pcs, zs=zs, kijs=zero, T=T, P=P, omegas=omegas),
            "rk": lambda: RKMIX(Tcs=tcs, Pcs=pcs, zs=zs, kijs=zero, T=T, P=P, omegas=omegas),
            "srk": lambda: SRKMIX(Tcs=tcs, Pcs=pcs, omegas=omegas, zs=zs, kijs=zero, T=T, P=P),
            "pr": lambda: PRMIX(Tcs=tcs, Pcs=pcs, omegas=omegas, zs=zs, kijs=kij_pr, T=T, P=P),
        }
        for name, make in makers.items():
            eos = make()
            z, v, lnphis, root = stable(eos)
            entry["models"][name] = {"z": z, "molar_volume_m3": v, "ln_phi": lnphis, "root": root}
        out.append(entry)
    doc = {
        "generator": "tests/reference/make_thermo_fixture.py",
        "library": f"thermo {thermo.__version__}, chemicals {chemicals.__version__}",
        "gas_constant": thermo.eos.R,
        "note": "vdw from Tc and Pc; k_ij: ChemSep table for pr, zero for the others",
        "states": out,
    }
    with open(os.path.join(ROOT, "tests", "fixtures", "thermo_states.json"), "w") as f:
        json.dump(doc, f, indent=1)
    print(f"{len(out)} states written")


if __name__ == "__main__":
    main()
