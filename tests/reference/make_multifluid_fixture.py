#!/usr/bin/env python3
"""Regenerate tests/fixtures/coolprop_multifluid.json: the multi-fluid model's checks.

CoolProp's HEOS backend evaluates the same kind of model (reference equations of state of
the pure fluids, combined by the GERG-2008 reducing functions and departure functions;
pairs without published parameters by the "linear" estimate, applied here with
apply_simple_mixing_rule), so it checks fillwright's implementation independently:

1. "pure": gas states at 15 C of the gases GERG-2008 lacks, and some it has, from the
   reference equations: (T, P) -> molar density and Z (phase imposed: gas; pressures
   below each gas's vapour pressure where it is subcritical).
2. "mixtures": blends at 100-200 bar and 15 C: (T, P, x) -> molar density, Z and ln phi.
   Each names whether its pairs are published or estimated.
3. "dew_points": dew temperatures (PQ flash, Q = 1) of pairs whose Peng-Robinson k_ij the
   catalogue curates, with GERG-2008's published parameters, and a control pair.

Z = 1 + delta * d(alpha_r)/d(delta) does not depend on the gas constant, so the test
compares Z at CoolProp's density, then the density fillwright solves at (T, P).

Run:  pip install CoolProp==8.0.0 && python3 tests/reference/make_multifluid_fixture.py
"""
import json
import math
import os

import CoolProp.CoolProp as CP

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))

NAMES = {
    "N2": "Nitrogen", "He": "Helium", "Ar": "Argon", "CH4": "Methane", "CO2": "CarbonDioxide",
    "O2": "Oxygen", "H2": "Hydrogen", "CO": "CarbonMonoxide", "Ne": "Neon", "Kr": "Krypton",
    "Xe": "Xenon", "SF6": "SulfurHexafluoride", "NH3": "Ammonia", "N2O": "NitrousOxide",
    "SO2": "SulfurDioxide", "CF4": "R14", "HCl": "HydrogenChloride", "COS": "CarbonylSulfide",
    "C2H4": "Ethylene", "C3H6": "Propylene", "H2S": "HydrogenSulfide", "C2H6": "Ethane",
    "C3H8": "n-Propane",
}
T = 288.15

PURE = [
    ("Ne", [50e5, 100e5, 200e5]),
    ("Kr", [50e5, 100e5, 200e5]),
    ("Xe", [10e5, 30e5, 50e5]),
    ("SF6", [5e5, 10e5, 15e5]),
    ("NH3", [2e5, 5e5, 6.5e5]),
    ("N2O", [10e5, 25e5, 40e5]),
    ("SO2", [1e5, 2e5, 2.5e5]),
    ("CF4", [50e5, 100e5]),
    ("HCl", [10e5, 25e5]),
    ("COS", [2e5, 5e5]),
    ("N2", [100e5, 200e5]),
    ("He", [100e5, 200e5]),
    ("CH4", [100e5, 200e5]),
]

MIXTURES = [
    (["N2", "SF6"], [0.99, 0.01], [100e5, 150e5, 200e5]),
    (["N2", "SO2"], [0.9995, 0.0005], [100e5, 200e5]),
    (["He", "Xe"], [0.98, 0.02], [100e5, 200e5]),
    (["N2", "NH3"], [0.999, 0.001], [100e5, 150e5]),
    (["N2", "N2O"], [0.99, 0.01], [150e5]),
    (["N2", "HCl"], [0.9995, 0.0005], [150e5]),
    (["Ar", "Kr"], [0.95, 0.05], [150e5]),
    (["N2", "CF4"], [0.98, 0.02], [150e5]),
    (["CH4", "N2", "CO2", "C2H6"], [0.85, 0.05, 0.05, 0.05], [100e5, 200e5]),
    (["N2", "CO2", "O2", "Ar"], [0.7, 0.15, 0.1, 0.05], [150e5]),
    (["N2", "COS", "H2S"], [0.998, 0.001, 0.001], [100e5]),
]


DEW_POINTS = [
    (["H2", "n-C4H10"], [0.98, 0.02], 30e5),
    (["N2", "n-C8H18"], [0.999, 0.001], 30e5),
    (["CH4", "C3H8"], [0.95, 0.05], 30e5),
]
NAMES["n-C4H10"] = "n-Butane"
NAMES["n-C8H18"] = "n-Octane"


def cas(gid):
    return CP.get_fluid_param_string(NAMES[gid], "CAS")


def estimated_pairs(ids):
    """Apply the linear rule to each pair CoolProp has no parameters for; list them."""
    out = []
    for i in range(len(ids)):
        for j in range(i + 1, len(ids)):
            known = False
            for a, b in [(ids[i], ids[j]), (ids[j], ids[i])]:
                try:
                    CP.get_mixture_binary_pair_data(cas(a), cas(b), "betaT")
                    known = True
                except ValueError:
                    pass
            if not known:
                CP.apply_simple_mixing_rule(cas(ids[i]), cas(ids[j]), "linear")
                out.append([ids[i], ids[j]])
    return out


def state(ids, x, p):
    a = CP.AbstractState("HEOS", "&".join(NAMES[i] for i in ids))
    if len(ids) > 1:
        a.set_mole_fractions(x)
    a.specify_phase(CP.iphase_gas)
    a.update(CP.PT_INPUTS, p, T)
    rho = a.rhomolar()
    z = a.keyed_output(CP.iZ)
    ln_phi = [math.log(a.fugacity_coefficient(k)) for k in range(len(ids))] if len(ids) > 1 else None
    return rho, z, ln_phi, a.gas_constant()


def main():
    pure = []
    for gid, pressures in PURE:
        for p in pressures:
            rho, z, _, r = state([gid], [1.0], p)
            pure.append({"id": gid, "t_k": T, "p_pa": p, "rho_mol_m3": rho, "z": z, "gas_constant": r,
                         "source": CP.get_fluid_param_string(NAMES[gid], "BibTeX-EOS")})
    mixtures = []
    for ids, x, pressures in MIXTURES:
        estimated = estimated_pairs(ids)
        for p in pressures:
            rho, z, ln_phi, r = state(ids, x, p)
            mixtures.append({"ids": ids, "x": x, "t_k": T, "p_pa": p, "rho_mol_m3": rho, "z": z, "gas_constant": r,
                             "ln_phi": ln_phi, "estimated_pairs": estimated})
    dew_points = []
    for ids, x, p in DEW_POINTS:
        a = CP.AbstractState("HEOS", "&".join(NAMES[i] for i in ids))
        a.set_mole_fractions(x)
        a.update(CP.PQ_INPUTS, p, 1.0)
        dew_points.append({"ids": ids, "x": x, "p_pa": p, "t_k": a.T()})
    out = {
        "generator": "tests/reference/make_multifluid_fixture.py",
        "dew_points": dew_points,
        "coolprop": CP.get_global_param_string("version"),
        "pure": pure,
        "mixtures": mixtures,
    }
    path = os.path.join(ROOT, "tests", "fixtures", "coolprop_multifluid.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
    print("%d pure states, %d mixture states -> %s" % (len(pure), len(mixtures), path))


if __name__ == "__main__":
    main()
