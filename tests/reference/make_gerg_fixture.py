#!/usr/bin/env python3
"""Regenerate tests/fixtures/teqp_gerg.json: GERG-2008 from `teqp`, independent of aga8.

1. States: 36 mixtures of calibration gases (2 to 6 components) at 250-350 K and densities
   that give about 1 to 300 bar; the pressure from (T, rho, x) by teqp's GERG2008resid,
   p = rho R T (1 + Ar01).
2. Plans: for orders whose gases GERG-2008 covers, the total amount from (T_ref, P, V, x)
   (density solved with scipy's brentq on teqp's pressure), pure sources added in
   ascending amount with the balance gas last, and the pressure after each step from
   (T_fill, V, amounts).

Run:  pip install teqp==0.23.2 scipy && python3 tests/reference/make_gerg_fixture.py
"""
import json
import os
import random

import numpy as np
import teqp
from scipy.optimize import brentq

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))

NAMES = {
    "CH4": "methane", "N2": "nitrogen", "CO2": "carbondioxide", "C2H6": "ethane", "C3H8": "propane",
    "n-C4H10": "n-butane", "i-C4H10": "isobutane", "n-C5H12": "n-pentane", "i-C5H12": "isopentane",
    "n-C6H14": "n-hexane", "H2": "hydrogen", "O2": "oxygen", "CO": "carbonmonoxide",
    "H2S": "hydrogensulfide", "He": "helium", "Ar": "argon", "H2O": "water",
}

ORDERS = [
    ("flue", [("CO", 500e-6), ("CH4", 0.025), ("CO2", 0.15), ("N2", None)], 10, 150, 288.15, 295.15),
    ("natural-gas", [("C2H6", 0.05), ("C3H8", 0.015), ("i-C4H10", 0.003), ("n-C4H10", 0.003),
                     ("i-C5H12", 0.001), ("n-C5H12", 0.001), ("N2", 0.02), ("CO2", 0.01), ("CH4", None)],
     10, 100, 288.15, 293.15),
    ("light", [("H2", 0.05), ("Ar", 0.01), ("He", None)], 50, 200, 288.15, 298.15),
    ("detector", [("CH4", 0.022), ("O2", 0.209), ("N2", None)], 10, 150, 288.15, 295.15),
    ("laser", [("CO2", 0.045), ("N2", 0.135), ("He", None)], 20, 180, 288.15, 293.15),
    ("sour", [("H2S", 0.001), ("CO2", 0.02), ("CH4", None)], 10, 120, 288.15, 303.15),
]


def model(ids):
    return teqp.make_model({"kind": "GERG2008resid", "model": {"names": [NAMES[i] for i in ids]}})


def pressure(m, T, rho, z):
    return rho * m.get_R(z) * T * (1.0 + m.get_Ar01(T, rho, z))


def main():
    rng = random.Random(7)
    pool = ["CH4", "N2", "CO2", "C2H6", "C3H8", "n-C4H10", "H2", "O2", "CO", "He", "Ar", "H2S"]
    states = []
    for k in range(36):
        ids = rng.sample(pool, 2 + k % 5)
        w = [rng.uniform(0.02, 1.0) for _ in ids]
        x = [v / sum(w) for v in w]
        T = rng.uniform(250.0, 350.0)
        p_guess = rng.uniform(1.0, 300.0) * 1e5
        rho = p_guess / (8.314 * T)
        m = model(ids)
        states.append({"ids": ids, "x": x, "temperature_k": T, "density_mol_m3": rho,
                       "pressure_pa": pressure(m, T, rho, np.array(x))})
    plans = []
    for label, parts, v_l, p_bar, t_ref, t_fill in ORDERS:
        ids = [p[0] for p in parts]
        known = sum(p[1] for p in parts if p[1] is not None)
        x = [p[1] if p[1] is not None else 1.0 - known for p in parts]
        m = model(ids)
        V, P = v_l * 1e-3, p_bar * 1e5
        rho = brentq(lambda r: pressure(m, t_ref, r, np.array(x)) - P, 1e-3, 3 * P / (8.314 * t_ref),
                     xtol=1e-14, rtol=1e-15, maxiter=500)
        total = rho * V
        balance = next(i for i, p in enumerate(parts) if p[1] is None)
        order = sorted((i for i in range(len(ids)) if i != balance), key=lambda i: x[i]) + [balance]
        cum = [0.0] * len(ids)
        steps = []
        for i in order:
            cum[i] += x[i] * total
            n = sum(cum)
            steps.append(pressure(m, t_fill, n / V, np.array([c / n for c in cum])))
        plans.append({"label": label, "ids": ids, "x": x, "volume_l": v_l, "pressure_bar": p_bar,
                      "reference_temperature_k": t_ref, "fill_temperature_k": t_fill,
                      "sequence": [ids[i] for i in order], "amount_mol": total, "step_pressures_pa": steps})
    doc = {"generator": "tests/reference/make_gerg_fixture.py", "library": f"teqp {teqp.__version__}",
           "gas_constant": 8.314472, "states": states, "plans": plans}
    with open(os.path.join(ROOT, "tests", "fixtures", "teqp_gerg.json"), "w") as f:
        json.dump(doc, f, indent=1)
    print(f"{len(states)} states, {len(plans)} plans written")


if __name__ == "__main__":
    main()
