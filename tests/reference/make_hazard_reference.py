#!/usr/bin/env python3
"""Regenerate tests/fixtures/hazard_reference.json: the hazard data `chemicals` carries for
every catalogue gas, for tests/hazard_reference.rs and src/gas/hazards.ron.

- lower and upper flammability limits in air, % by volume: IEC 60079-20-1 (2010) and
  NFPA 497 (2008);
- ISO 10156:2017 K_k, the inerting coefficients relative to nitrogen;
- occupational exposure limits, ppm: TWA, STEL and ceiling of the Ontario Limits list
  (Ontario Regulation 833), the one list chemicals carries.

Run:  pip install chemicals==1.5.2 && python3 tests/reference/make_hazard_reference.py
"""
import os
import sys
import warnings

import chemicals
import chemicals.safety as safety

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from make_catalogue_reference import catalogue, write_fixture  # noqa: E402

warnings.filterwarnings("ignore")
IEC, NFPA = "IEC 60079-20-1 (2010)", "NFPA 497 (2008)"


def percent(fraction):
    return None if fraction is None else round(fraction * 100.0, 6)


def limit(fn, methods, cas, method):
    return percent(fn(CASRN=cas, method=method)) if method in methods else None


def exposure(fn, methods_fn, cas):
    if "Ontario Limits" not in (methods_fn(cas) or []):
        return None
    value, unit = fn(cas, method="Ontario Limits")
    return value if unit == "ppm" else None


def main():
    gases = []
    for gid, cas in catalogue():
        lfl_m, ufl_m = safety.LFL_methods(CASRN=cas), safety.UFL_methods(CASRN=cas)
        gases.append({
            "id": gid,
            "cas": cas,
            "lfl_iec": limit(safety.LFL, lfl_m, cas, IEC),
            "lfl_nfpa": limit(safety.LFL, lfl_m, cas, NFPA),
            "ufl_iec": limit(safety.UFL, ufl_m, cas, IEC),
            "ufl_nfpa": limit(safety.UFL, ufl_m, cas, NFPA),
            "inert_k_iso_10156_2017": safety.ISO_10156_2017_Kks.get(cas),
            "twa_ppm": exposure(safety.TWA, safety.TWA_methods, cas),
            "stel_ppm": exposure(safety.STEL, safety.STEL_methods, cas),
            "ceiling_ppm": exposure(safety.Ceiling, safety.Ceiling_methods, cas),
        })
    out = {"generator": "tests/reference/make_hazard_reference.py", "chemicals": chemicals.__version__, "gases": gases}
    write_fixture("hazard_reference.json", out)


if __name__ == "__main__":
    main()
