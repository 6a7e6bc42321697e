#!/usr/bin/env python3
"""Regenerate tests/fixtures/phase_reference.json: vapour pressures from CoolProp and
Peng-Robinson dew points and cricondentherms from thermo's flash.

1. Vapour pressures of condensable catalogue gases at 0.6, 0.75 and 0.9 of the critical
   temperature from CoolProp's reference equations of state (PropsSI 'P', Q=0).
2. For five mixtures, the PR dew temperature at 5, 20 and 40 bar (thermo FlashVL,
   VF=1) and the cricondentherm (the largest dew temperature over pressure, by bounded
   scalar maximisation), with the catalogue's Tc, Pc, omega (`fillwright gases`) and the
   ChemSep PR k_ij.

Run:  cargo build && pip install CoolProp==8.0.0 thermo==0.6.1 && python3 tests/reference/make_phase_fixture.py
"""
import json
import sys
import math
import os
import subprocess

import CoolProp
import thermo
from CoolProp.CoolProp import PropsSI
from scipy.optimize import minimize_scalar
from thermo import CEOSGas, CEOSLiquid, ChemicalConstantsPackage, FlashVL, PRMIX

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
sys.path.insert(0, os.path.join(ROOT, "tools"))
import make_catalogue as mc  # noqa: E402

COOLPROP = {
    "CO2": "CarbonDioxide", "C3H8": "Propane", "n-C4H10": "n-Butane", "i-C4H10": "IsoButane",
    "NH3": "Ammonia", "SO2": "SulfurDioxide", "H2S": "HydrogenSulfide", "C2H6": "Ethane",
    "n-C5H12": "n-Pentane", "H2O": "Water", "SF6": "SulfurHexafluoride", "N2O": "NitrousOxide",
    "C2H4": "Ethylene", "C3H6": "Propylene", "CH3OH": "Methanol",
}

MIXTURES = [
    ("propane-in-N2", [("C3H8", 0.05), ("N2", 0.95)]),
    ("butane-in-N2", [("n-C4H10", 0.02), ("N2", 0.98)]),
    ("co2-in-N2", [("CO2", 0.30), ("N2", 0.70)]),
    ("natural-gas", [("CH4", 0.897), ("C2H6", 0.05), ("C3H8", 0.015), ("i-C4H10", 0.003), ("n-C4H10", 0.003),
                     ("i-C5H12", 0.001), ("n-C5H12", 0.001), ("N2", 0.02), ("CO2", 0.01)]),
    ("lpg-in-methane", [("C3H8", 0.08), ("n-C4H10", 0.03), ("CH4", 0.89)]),
    ("propane-20-in-N2", [("C3H8", 0.20), ("N2", 0.80)]),
    ("pentane-in-methane", [("n-C5H12", 0.01), ("CH4", 0.99)]),
    ("co2-in-methane", [("CO2", 0.10), ("CH4", 0.90)]),
    ("ethane-propane-in-methane", [("C2H6", 0.10), ("C3H8", 0.05), ("CH4", 0.85)]),
    ("butane-in-methane", [("n-C4H10", 0.03), ("CH4", 0.97)]),
]

# Saturation states of pure gases at 0, 15 and 25 °C (CoolProp's reference equations).
SATURATION = [("CO2", "CarbonDioxide"), ("C3H8", "Propane"), ("C2H6", "Ethane")]
SATURATION_T = (273.15, 288.15, 298.15)
# CO2 in a 10 L cylinder at 15 °C: amounts that make it two-phase (PropsSI at T and density).
CYLINDER_CO2 = (50.0, 100.0, 150.0)
MOLAR_MASS_CO2 = 44.0095  # g/mol, CoolProp's


def coolprop_cricondentherm(ids, zs, t_limit):
    """The largest dew temperature over pressure from CoolProp's multi-fluid model
    (PQ flash at Q=1 on a grid in ln P, refined by bounded maximisation). None when the
    flash does not converge (CoolProp's mixture flash fails for some pairs)."""
    from CoolProp.CoolProp import AbstractState, PQ_INPUTS
    st = AbstractState("HEOS", "&".join(COOLPROP_ALL[i] for i in ids))
    st.set_mole_fractions(zs)

    def dew(lp):
        st.update(PQ_INPUTS, 10 ** lp, 1.0)
        return st.T()

    best = None
    for k in range(0, 45):
        lp = 5 + k * 0.05
        try:
            t = dew(lp)
        except ValueError:
            continue
        if t < t_limit and (best is None or t > best[0]):
            best = (t, lp)
    if best is None:
        return None
    try:
        res = minimize_scalar(lambda lp: -dew(lp), bounds=(best[1] - 0.05, best[1] + 0.05), method="bounded",
                              options={"xatol": 1e-6})
        refined = -res.fun
        # The flash can jump to a spurious root; keep the refinement only near the grid's best.
        return max(best[0], refined) if abs(refined - best[0]) < 5.0 else best[0]
    except ValueError:
        return best[0]


COOLPROP_ALL = dict(COOLPROP, **{"N2": "Nitrogen", "CH4": "Methane", "n-C8H18": "n-Octane", "n-C6H14": "n-Hexane"})

# Mixtures whose PR cricondentherm is compared with CoolProp's multi-fluid one (the margin).
MARGIN_MIXTURES = [
    ("propane-5-in-N2", [("C3H8", 0.05), ("N2", 0.95)]),
    ("propane-20-in-N2", [("C3H8", 0.20), ("N2", 0.80)]),
    ("butane-in-N2", [("n-C4H10", 0.02), ("N2", 0.98)]),
    ("pentane-in-methane", [("n-C5H12", 0.01), ("CH4", 0.99)]),
    ("hexane-in-N2", [("n-C6H14", 0.005), ("N2", 0.995)]),
    ("octane-in-N2", [("n-C8H18", 0.001), ("N2", 0.999)]),
    ("lpg-in-methane", [("C3H8", 0.08), ("n-C4H10", 0.03), ("CH4", 0.89)]),
]


def main():
    out = subprocess.run(["cargo", "run", "-q", "--", "gases", "--format", "json"], cwd=ROOT,
                         check=True, capture_output=True, text=True).stdout
    gases = {g["id"]: g for g in json.loads(out)["gases"]}
    vapour = []
    for gid, name in COOLPROP.items():
        tc = gases[gid]["critical_temperature_k"]
        for f in (0.6, 0.75, 0.9):
            T = f * tc
            try:
                p = PropsSI("P", "T", T, "Q", 0, name)
            except ValueError:
                continue
            vapour.append({"id": gid, "temperature_k": T, "pressure_pa": p})
    mixtures = []
    for label, parts in MIXTURES:
        ids = [p[0] for p in parts]
        zs = [p[1] for p in parts]
        tcs = [gases[i]["critical_temperature_k"] for i in ids]
        pcs = [gases[i]["critical_pressure_bar"] * 1e5 for i in ids]
        oms = [gases[i]["acentric_factor"] for i in ids]
        cas = [gases[i]["cas"] for i in ids]
        kij = mc.kij_matrix(cas)
        consts, props = ChemicalConstantsPackage.from_IDs(cas)
        consts = ChemicalConstantsPackage(Tcs=tcs, Pcs=pcs, omegas=oms, MWs=consts.MWs, CASs=cas)
        kw = dict(Tcs=tcs, Pcs=pcs, omegas=oms, kijs=kij)
        flasher = FlashVL(consts, props, liquid=CEOSLiquid(PRMIX, eos_kwargs=kw, HeatCapacityGases=props.HeatCapacityGases),
                          gas=CEOSGas(PRMIX, eos_kwargs=kw, HeatCapacityGases=props.HeatCapacityGases))

        def dew(p):
            return flasher.flash(P=p, VF=1, zs=zs).T

        def bubble(p):
            return flasher.flash(P=p, VF=0, zs=zs).T

        points = []
        for p_bar in (5, 20, 40):
            try:
                points.append({"pressure_pa": p_bar * 1e5, "dew_temperature_k": dew(p_bar * 1e5)})
            except Exception as e:  # no dew point at this pressure
                print(label, p_bar, "no dew point:", e)
        grid = [1e5 * 10 ** (k / 10) for k in range(0, 25)]
        best = None
        for p in grid:
            try:
                t = dew(p)
            except Exception:
                continue
            if best is None or t > best[0]:
                best = (t, p)
        centre = math.log10(best[1])
        res = minimize_scalar(lambda lp: -dew(10 ** lp), bounds=(centre - 0.1, centre + 0.1), method="bounded",
                              options={"xatol": 1e-7})
        ct = max(best[0], -res.fun)
        bubbles = []
        for p_bar in (5, 20, 40):
            try:
                t = bubble(p_bar * 1e5)
            except Exception as e:  # no bubble point at this pressure
                print(label, p_bar, "no bubble point:", e)
                continue
            # For nitrogen-rich feeds thermo's VF=0 flash returns the dew point; not a bubble point.
            if all(abs(t - d["dew_temperature_k"]) > 1e-3 for d in points):
                bubbles.append({"pressure_pa": p_bar * 1e5, "bubble_temperature_k": t})
        mixtures.append({"label": label, "ids": ids, "x": zs, "dew_points": points, "bubble_points": bubbles,
                         "cricondentherm_k": ct, "cricondentherm_pressure_pa": 10 ** res.x})
    saturation = []
    for gid, name in SATURATION:
        for T in SATURATION_T:
            saturation.append({"id": gid, "temperature_k": T, "pressure_pa": PropsSI("P", "T", T, "Q", 0, name),
                               "liquid_density_mol_m3": PropsSI("Dmolar", "T", T, "Q", 0, name),
                               "vapour_density_mol_m3": PropsSI("Dmolar", "T", T, "Q", 1, name)})
    cylinder = []
    for n in CYLINDER_CO2:
        rho = n * MOLAR_MASS_CO2 / 1000 / 0.010  # kg/m3 in 10 L
        cylinder.append({"id": "CO2", "temperature_k": 288.15, "volume_m3": 0.010, "amount_mol": n,
                         "pressure_pa": PropsSI("P", "T", 288.15, "D", rho, "CarbonDioxide"),
                         "quality": PropsSI("Q", "T", 288.15, "D", rho, "CarbonDioxide")})
    envelopes = []
    for label, parts in MARGIN_MIXTURES:
        ids = [p[0] for p in parts]
        zs = [p[1] for p in parts]
        # A dew point near the heaviest component's critical temperature is a spurious root.
        t_limit = 0.9 * max(gases[i]["critical_temperature_k"] for i in ids)
        ct = coolprop_cricondentherm(ids, zs, t_limit)
        if ct is None:
            print(label, "CoolProp found no envelope")
            continue
        envelopes.append({"label": label, "ids": ids, "x": zs, "cricondentherm_k": ct})
    doc = {"generator": "tests/reference/make_phase_fixture.py",
           "library": f"CoolProp {CoolProp.__version__}, thermo {thermo.__version__}",
           "vapour_pressures": vapour, "mixtures": mixtures, "saturation": saturation,
           "cylinder": cylinder, "multifluid_cricondentherms": envelopes}
    with open(os.path.join(ROOT, "tests", "fixtures", "phase_reference.json"), "w") as f:
        json.dump(doc, f, indent=1)
    print(f"{len(vapour)} vapour pressures, {len(mixtures)} mixtures written")


if __name__ == "__main__":
    main()
