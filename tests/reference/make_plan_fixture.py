#!/usr/bin/env python3
"""Regenerate tests/fixtures/thermo_plans.json: fill plans computed with `thermo`.

An independent fill plan for each order: the total amount from (T_ref, P_final, V, x)
with thermo's mixture EOS, the sources pure and added in ascending amount with the
balance gas last, and the pressure after each step from (T_fill, V, amounts). Constants
come from `fillwright gases --format json` (the catalogue the program uses). For van der
Waals the CRC table a and b are fed to thermo's VDWMIX through the equivalent critical
constants Tc = 8a/(27Rb), Pc = a/(27b^2); where the table has no entry, Tc and Pc.

Run:  cargo build && pip install thermo==0.6.1 && python3 tests/reference/make_plan_fixture.py
"""
import json
import sys
import os
import subprocess

import thermo
from thermo.eos_mix import PRMIX, VDWMIX

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
sys.path.insert(0, os.path.join(ROOT, "tools"))
import make_catalogue as mc  # noqa: E402
R = thermo.eos.R

ORDERS = [
    # (label, [(id, fraction or None for balance)], volume L, P_final bar, T_ref K, T_fill K)
    ("flue", [("CO", 500e-6), ("CH4", 0.025), ("CO2", 0.15), ("N2", None)], 10, 150, 288.15, 295.15),
    ("natural-gas", [("C2H6", 0.05), ("C3H8", 0.015), ("i-C4H10", 0.003), ("n-C4H10", 0.003),
                     ("i-C5H12", 0.001), ("n-C5H12", 0.001), ("N2", 0.02), ("CO2", 0.01), ("CH4", None)],
     10, 100, 288.15, 293.15),
    ("light", [("H2", 0.05), ("Ar", 0.01), ("He", None)], 50, 200, 288.15, 298.15),
    ("lpg", [("C3H8", 0.06), ("n-C4H10", 0.02), ("CH4", None)], 10, 60, 288.15, 293.15),
    ("detector", [("CH4", 0.022), ("O2", 0.209), ("N2", None)], 10, 150, 288.15, 295.15),
    ("laser", [("CO2", 0.045), ("N2", 0.135), ("He", None)], 20, 180, 288.15, 293.15),
    ("so2-nox", [("SO2", 0.002), ("NO", 0.001), ("N2O", 0.005), ("N2", None)], 10, 120, 288.15, 303.15),
]


def main():
    out = subprocess.run(["cargo", "run", "-q", "--", "gases", "--format", "json"], cwd=ROOT,
                         check=True, capture_output=True, text=True).stdout
    gases = {g["id"]: g for g in json.loads(out)["gases"]}
    plans = []
    for label, parts, v_l, p_bar, t_ref, t_fill in ORDERS:
        ids = [p[0] for p in parts]
        known = sum(p[1] for p in parts if p[1] is not None)
        x = [p[1] if p[1] is not None else 1.0 - known for p in parts]
        V = v_l * 1e-3
        P = p_bar * 1e5
        tc = [gases[i]["critical_temperature_k"] for i in ids]
        pc = [gases[i]["critical_pressure_bar"] * 1e5 for i in ids]
        om = [gases[i]["acentric_factor"] for i in ids]
        n = len(ids)
        cas = [gases[i]["cas"] for i in ids]
        kij = mc.kij_matrix(cas)
        tc_vdw, pc_vdw = [], []
        for i, g in enumerate(ids):
            a = gases[g]["van_der_waals_a_bar_l2_per_mol2"]
            b = gases[g]["van_der_waals_b_l_per_mol"]
            if a is None:
                tc_vdw.append(tc[i])
                pc_vdw.append(pc[i])
            else:
                a_si, b_si = a * 0.1, b * 1e-3
                tc_vdw.append(8 * a_si / (27 * R * b_si))
                pc_vdw.append(a_si / (27 * b_si * b_si))
        zero = [[0.0] * n for _ in range(n)]

        def eos(model, zs, **state):
            if model == "pr":
                return PRMIX(Tcs=tc, Pcs=pc, omegas=om, zs=zs, kijs=kij, **state)
            return VDWMIX(Tcs=tc_vdw, Pcs=pc_vdw, omegas=om, zs=zs, kijs=zero, **state)

        entry = {"label": label, "ids": ids, "x": x, "volume_l": v_l, "pressure_bar": p_bar,
                 "reference_temperature_k": t_ref, "fill_temperature_k": t_fill, "models": {}}
        balance = next(i for i, p in enumerate(parts) if p[1] is None)
        order = sorted((i for i in range(n) if i != balance), key=lambda i: x[i]) + [balance]
        entry["sequence"] = [ids[i] for i in order]
        for model in ["vdw", "pr"]:
            e = eos(model, x, T=t_ref, P=P)
            if hasattr(e, "V_g") and hasattr(e, "V_l"):
                v_molar = e.V_g if e.G_dep_g <= e.G_dep_l else e.V_l
            else:
                v_molar = e.V_g if hasattr(e, "V_g") else e.V_l
            total = V / v_molar
            cum = [0.0] * n
            steps = []
            for i in order:
                cum[i] += x[i] * total
                ntot = sum(cum)
                zs = [c / ntot for c in cum]
                steps.append(eos(model, zs, T=t_fill, V=V / ntot).P)
            entry["models"][model] = {"amount_mol": total, "step_pressures_pa": steps}
        plans.append(entry)
    doc = {"generator": "tests/reference/make_plan_fixture.py", "library": f"thermo {thermo.__version__}",
           "plans": plans}
    with open(os.path.join(ROOT, "tests", "fixtures", "thermo_plans.json"), "w") as f:
        json.dump(doc, f, indent=1)
    print(f"{len(plans)} plans written")


if __name__ == "__main__":
    main()
