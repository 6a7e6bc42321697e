#!/usr/bin/env python3
"""Regenerate tests/fixtures/envelope_reference.json: dew points and cricondentherms of
blends under CoolProp's multi-fluid model (HEOS), from a dew-point solver written here on
CoolProp's own fugacity coefficients (its PQ flash fails near the cricondentherm of many
of these blends).

Dew point at P: the temperature where the feed z (as vapour) is in equilibrium with an
incipient liquid x: x_i = z_i phi_i^V(z) / phi_i^L(x) / S, S = sum of the same; S = 1 at the
dew point (S > 1 inside the envelope). Each phase's fugacity coefficients come from CoolProp
with the phase imposed (specify_phase), the liquid x by successive substitution from
Wilson's K-values, S = 1 by Brent's method in T between a point inside and one outside,
found by walking down from above. The cricondentherm is the largest dew temperature over
ln P (a grid, then bounded maximisation).

Run:  pip install CoolProp==8.0.0 scipy && python3 tests/reference/make_envelope_fixture.py
"""
import json
import math
import os

import CoolProp
from CoolProp.CoolProp import AbstractState, PropsSI, PT_INPUTS, apply_simple_mixing_rule, iphase_gas, iphase_liquid
from scipy.optimize import brentq, minimize_scalar

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))

NAMES = {"N2": "Nitrogen", "CH4": "Methane", "C3H8": "Propane", "n-C4H10": "n-Butane", "n-C5H12": "n-Pentane",
         "n-C6H14": "n-Hexane", "C7H8": "Toluene", "CO2": "CarbonDioxide", "C2H6": "Ethane"}
# (label, [(id, mole fraction)], pressures for dew points in bar)
MIXTURES = [
    ("propane-5-in-N2", [("C3H8", 0.05), ("N2", 0.95)], [10, 40]),
    ("propane-20-in-N2", [("C3H8", 0.20), ("N2", 0.80)], [10, 40]),
    ("butane-2-in-N2", [("n-C4H10", 0.02), ("N2", 0.98)], [10, 40]),
    ("butane-5-in-N2", [("n-C4H10", 0.05), ("N2", 0.95)], [10, 40]),
    ("pentane-1-in-N2", [("n-C5H12", 0.01), ("N2", 0.99)], [10, 40]),
    ("pentane-1-in-CH4", [("n-C5H12", 0.01), ("CH4", 0.99)], [10, 40]),
    ("hexane-2-in-CH4", [("n-C6H14", 0.02), ("CH4", 0.98)], [10, 40]),
    ("hexane-0.5-in-N2", [("n-C6H14", 0.005), ("N2", 0.995)], [10, 40]),
    ("toluene-1-in-N2", [("C7H8", 0.01), ("N2", 0.99)], [10, 40]),
    ("lpg-in-methane", [("C3H8", 0.08), ("n-C4H10", 0.03), ("CH4", 0.89)], [10, 40]),
]


# Pairs with no published parameters: the linear rule, as the multi-fluid model here
# (CoolProp's apply_simple_mixing_rule with "linear"). Toluene / nitrogen by CAS number.
LINEAR = [("108-88-3", "7727-37-9")]


class Dew:
    def __init__(self, ids, z):
        names = "&".join(NAMES[i] for i in ids)
        self.v = AbstractState("HEOS", names)
        self.l = AbstractState("HEOS", names)
        self.v.specify_phase(iphase_gas)
        self.l.specify_phase(iphase_liquid)
        self.z = z
        self.tc = [AbstractState("HEOS", NAMES[i]).T_critical() for i in ids]
        self.pc = [AbstractState("HEOS", NAMES[i]).p_critical() for i in ids]
        self.om = [AbstractState("HEOS", NAMES[i]).acentric_factor() for i in ids]

    def phi(self, st, x, t, p):
        st.set_mole_fractions(x)
        st.update(PT_INPUTS, p, t)
        return [st.fugacity_coefficient(i) for i in range(len(x))]

    def incipient(self, t, p, liquid_feed):
        """ln S at (T, P): the feed (a vapour for a dew point, a liquid for a bubble point)
        against an incipient phase of the other kind, w_i = z_i phi_i(feed) / phi_i(w) / S by
        successive substitution from Wilson's K-values; S = 1 on the boundary, above 1 inside.
        None where it falls onto the feed or a phase has no root."""
        z = self.z
        feed, other = (self.l, self.v) if liquid_feed else (self.v, self.l)
        try:
            pf = self.phi(feed, z, t, p)
        except ValueError:
            return None
        k = [pc / p * math.exp(5.373 * (1 + w) * (1 - tc / t)) for tc, pc, w in zip(self.tc, self.pc, self.om)]
        w = [zi * ki if liquid_feed else zi / ki for zi, ki in zip(z, k)]
        s = sum(w)
        w = [wi / s for wi in w]
        for _ in range(300):
            try:
                po = self.phi(other, w, t, p)
                raw = [zi * a / b for zi, a, b in zip(z, pf, po)]
            except (ValueError, ZeroDivisionError):
                return None
            s = sum(raw)
            new = [ri / s for ri in raw]
            change = max(abs(math.log(a / b)) for a, b in zip(new, w))
            w = new
            if max(abs(a - b) for a, b in zip(w, z)) < 1e-6:
                return None
            if change < 1e-12:
                break
        return math.log(s)

    def bracketed(self, p, liquid_feed, outside, inside, missing):
        """Brent's method on ln S between a point outside and one inside; `missing` stands
        for ln S where the iteration gives none."""
        def f(t):
            e = self.incipient(t, p, liquid_feed)
            return missing if e is None else e
        return brentq(f, min(outside, inside), max(outside, inside), xtol=1e-9, rtol=1e-14)

    def bubble(self, p, bottom, top):
        """The bubble temperature at p: walk up from `bottom` to the first point above it, then Brent."""
        t, below = bottom, None
        while t < top:
            e = self.incipient(t, p, True)
            if e is not None and e > 0:
                if below is None:
                    return None
                return self.bracketed(p, True, below, t, 1.0)
            if e is not None:
                below = t
            t += 0.5
        return None

    def temperature(self, p, top):
        """The dew temperature at p: walk down from `top` to the first point inside, then Brent."""
        t = top
        outside = None
        while t > 60:
            e = self.incipient(t, p, False)
            if e is not None and e > 0:
                if outside is None:
                    return None
                return self.bracketed(p, False, outside, t, -1.0)
            if e is not None:
                outside = t
            t -= 0.5
        return None


def main():
    for a, b in LINEAR:
        apply_simple_mixing_rule(a, b, "linear")
    out = []
    for label, parts, pressures in MIXTURES:
        ids = [p[0] for p in parts]
        z = [p[1] for p in parts]
        d = Dew(ids, z)
        top = 1.1 * max(tc for tc, zi in zip(d.tc, z))
        dews = []
        for p_bar in pressures:
            t = d.temperature(p_bar * 1e5, top)
            if t is not None:
                dews.append({"pressure_pa": p_bar * 1e5, "dew_temperature_k": t})
        grid = [(lp, d.temperature(10 ** lp, top)) for lp in [5.5 + 0.1 * k for k in range(21)]]
        grid = [(lp, t) for lp, t in grid if t is not None]
        lp0, t0 = max(grid, key=lambda g: g[1])

        def neg(lp):
            t = d.temperature(10 ** lp, t0 + 5)
            return -(t if t is not None else 0.0)

        res = minimize_scalar(neg, bounds=(lp0 - 0.1, lp0 + 0.1), method="bounded", options={"xatol": 1e-5})
        ct, lp = (-res.fun, res.x) if -res.fun >= t0 else (t0, lp0)
        print(label, ct, 10 ** lp / 1e5, dews)
        out.append({"label": label, "ids": ids, "x": z, "dew_points": dews, "cricondentherm_k": ct,
                    "cricondentherm_pressure_pa": 10 ** lp})
    # Saturation of the gases whose reference equation the multi-fluid model took from
    # CoolProp's own library (tools/make_multifluid.py): chlorine.
    saturation = []
    for gid, name in [("Cl2", "Chlorine")]:
        for t in (180.0, 200.0, 239.0, 253.15, 293.15, 350.0, 400.0):
            saturation.append({"id": gid, "temperature_k": t, "pressure_pa": PropsSI("P", "T", t, "Q", 0, name),
                               "liquid_density_mol_m3": PropsSI("Dmolar", "T", t, "Q", 0, name),
                               "vapour_density_mol_m3": PropsSI("Dmolar", "T", t, "Q", 1, name)})
    # Bubble points of liquefied blends (the feed as a liquid against an incipient vapour).
    bubbles = []
    for label, parts, pressures in [
        ("propane-80-butane-20", [("C3H8", 0.8), ("n-C4H10", 0.2)], [5, 10]),
        ("propane-95-ethane-5", [("C3H8", 0.95), ("C2H6", 0.05)], [10, 15]),
    ]:
        ids = [q[0] for q in parts]
        z = [q[1] for q in parts]
        d = Dew(ids, z)
        for p_bar in pressures:
            t = d.bubble(p_bar * 1e5, 180.0, max(d.tc))
            print(label, p_bar, "bubble", t)
            if t is not None:
                bubbles.append({"label": label, "ids": ids, "x": z, "pressure_pa": p_bar * 1e5, "bubble_temperature_k": t})
    doc = {"generator": "tests/reference/make_envelope_fixture.py", "bubble_points": bubbles,
           "library": "CoolProp %s (HEOS fugacity coefficients)" % CoolProp.__version__, "mixtures": out,
           "saturation": saturation}
    with open(os.path.join(ROOT, "tests", "fixtures", "envelope_reference.json"), "w") as f:
        json.dump(doc, f, indent=1)


if __name__ == "__main__":
    main()
