#!/usr/bin/env python3
"""Regenerate tests/fixtures/catalogue_reference.json: every catalogue gas's constants
from outside the project, for tests/catalogue_reference.rs.

For each gas: from CoolProp (its reference equation of state) where it has the gas, the
critical temperature and pressure, acentric factor, molar mass, normal boiling point and
the saturation pressure at three temperatures (0.6, 0.75 and 0.9 Tc, above the triple
point); from `chemicals` (its default data set for each property) the same constants, and
from `thermo`'s VaporPressure (its default correlation) the saturation pressures where
CoolProp has no equation.

Run:  pip install CoolProp==8.0.0 chemicals==1.5.2 thermo==0.6.1 &&
      python3 tests/reference/make_catalogue_reference.py
"""
import json
import os
import re
import warnings

import chemicals
import CoolProp
import CoolProp.CoolProp as CP
import thermo
from chemicals import acentric, critical, phase_change
from thermo import VaporPressure

warnings.filterwarnings("ignore")
HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))


def catalogue():
    text = open(os.path.join(ROOT, "src", "gas", "catalogue.ron")).read()
    return [(m.group(1), m.group(2)) for m in re.finditer(r'id: "([^"]*)".*?cas: "([^"]*)"', text, re.S)]


def coolprop(cas):
    try:
        name = CP.get_fluid_param_string(cas, "name")
    except ValueError:
        return None
    tc = CP.PropsSI("Tcrit", name)
    t_triple = CP.PropsSI("Ttriple", name)
    out = {
        "name": name,
        "equation": CP.get_fluid_param_string(name, "BibTeX-EOS"),
        "tc_k": tc,
        "pc_pa": CP.PropsSI("pcrit", name),
        "omega": CP.PropsSI("acentric", name),
        "molar_mass": CP.PropsSI("molar_mass", name) * 1e3,
        "psat": [],
    }
    # None where the gas sublimes at 1 atm (CO2, SF6: the triple point lies above 1 atm).
    out["tb_k"] = None if CP.PropsSI("ptriple", name) > 101325.0 else CP.PropsSI("T", "P", 101325.0, "Q", 0, name)
    for f in (0.6, 0.75, 0.9):
        t = max(f * tc, t_triple + 1.0)
        out["psat"].append([t, CP.PropsSI("P", "T", t, "Q", 0, name)])
    return out


def from_chemicals(cas):
    tc = critical.Tc(cas)
    out = {
        "tc_k": tc,
        "pc_pa": critical.Pc(cas),
        "omega": acentric.omega(cas),
        "molar_mass": chemicals.MW(cas),
        "tb_k": phase_change.Tb(cas),
        "psat": [],
    }
    vp = VaporPressure(CASRN=cas)
    out["psat_method"] = vp.method
    lo, hi = vp.T_limits[vp.method]
    for f in (0.6, 0.75, 0.9):
        t = f * tc
        if lo <= t <= hi:
            out["psat"].append([t, vp(t)])
    return out


def main():
    gases = []
    for gid, cas in catalogue():
        gases.append({"id": gid, "cas": cas, "coolprop": coolprop(cas), "chemicals": from_chemicals(cas)})
    out = {
        "generator": "tests/reference/make_catalogue_reference.py",
        "versions": {"CoolProp": CoolProp.__version__, "chemicals": chemicals.__version__, "thermo": thermo.__version__},
        "gases": gases,
    }
    write_fixture("catalogue_reference.json", out)


def write_fixture(name, out):
    """Write `out` as tests/fixtures/NAME and say so."""
    path = os.path.join(ROOT, "tests", "fixtures", name)
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
    print("%d gases -> %s" % (len(out["gases"]), path))


if __name__ == "__main__":
    main()
