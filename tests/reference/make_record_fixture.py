"""Composition and standard uncertainty of fill records, computed independently with the
`uncertainties` package (PyPI), for tests/record.rs.

Writes the records to tests/records/*.ron and the expected figures to
tests/fixtures/uncertainties_records.json. The model is ISO 6142-1 written out here
from scratch: masses from consecutive readings, source analyses with ± (normal) and <L
(L/2, u = L/(2√3), ISO 19229), the balance as 1 − Σ others, molar masses from CIAAW
atomic weights with rectangular uncertainties (u = half-width/√3).

    pip install uncertainties==3.2.3
    python3 tests/reference/make_record_fixture.py
"""
import json
import math
import os
import re

import uncertainties
from uncertainties import ufloat, umath

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))

# CIAAW: conventional value and interval, or value and ±U (as in src/gas/formula.rs).
S3 = math.sqrt(3.0)
ATOMS = {
    "H": (1.008, (1.00811 - 1.00784) / (2 * S3)),
    "C": (12.011, (12.0116 - 12.0096) / (2 * S3)),
    "N": (14.007, (14.00728 - 14.00643) / (2 * S3)),
    "O": (15.999, (15.99977 - 15.99903) / (2 * S3)),
    "S": (32.06, (32.076 - 32.059) / (2 * S3)),
    "Ar": (39.948, 0.001 / S3),
    "He": (4.002602, 0.000002 / S3),
}
ATOM = {k: ufloat(v, u, "atomic weight of " + k) for k, (v, u) in ATOMS.items()}
FORMULA = {"CO": "CO", "N2": "N2", "CO2": "CO2", "O2": "O2", "Ar": "Ar", "CH4": "CH4",
           "NO": "NO", "SO2": "SO2", "H2O": "H2O", "He": "He", "H2": "H2", "C3H8": "C3H8"}
UNITS = {"%": 1e-2, "ppm": 1e-6, "ppb": 1e-9, "": 1.0}


def molar_mass(gas):
    total = 0
    for sym, n in re.findall(r"([A-Z][a-z]?)(\d*)", FORMULA[gas]):
        total = total + ATOM[sym] * (int(n) if n else 1)
    return total


def amount(text):
    m = re.fullmatch(r"([0-9.eE+-]+)\s*(%|ppm|ppb|)", text.strip())
    return float(m.group(1)) * UNITS[m.group(2)], m.group(2)


def analysis(spec, k):
    """Mole fractions (ufloats) of one source."""
    out, balance, others = {}, None, []
    for item in spec.split(","):
        gas, a = item.split("=")
        if a == "balance":
            balance = gas
            continue
        if a.startswith("<"):
            limit, _ = amount(a[1:])
            x = ufloat(limit / 2, limit / (2 * S3), f"{gas} in source {k}")
        elif "±" in a:
            v, u = a.split("±")
            value, unit = amount(v)
            if u.endswith("%rel"):
                su = float(u[:-4]) / 100 * value
            else:
                su, _ = amount(u)
            x = ufloat(value, su, f"{gas} in source {k}")
        else:
            x = amount(a)[0]
        out[gas] = x
        others.append(x)
    if balance:
        out[balance] = 1 - sum(others)
    return out


def cipm_2007(t_k, p, h):
    """Density of moist air, kg/m3 (Picard et al., Metrologia 45 (2008) 149), x_CO2 = 0.0004."""
    t = t_k - 273.15
    p_sv = umath.exp(1.2378847e-5 * t_k ** 2 - 1.9121316e-2 * t_k + 33.93711047 - 6.3431645e3 / t_k)
    f = 1.00062 + 3.14e-8 * p + 5.6e-7 * t ** 2
    x_v = h * f * p_sv / p
    z = (1 - p / t_k * (1.58123e-6 - 2.9331e-8 * t + 1.1043e-10 * t ** 2 + (5.707e-6 - 2.051e-8 * t) * x_v
                        + (1.9898e-4 - 2.376e-6 * t) * x_v ** 2)
         + (p / t_k) ** 2 * (1.83e-11 - 0.765e-8 * x_v ** 2))
    m_a, m_v, r = 28.96546e-3, 18.01528e-3, 8.314472
    return p * m_a / (z * r * t_k) * (1 - x_v * (1 - m_v / m_a))


def air_densities(rec):
    """One independent input per weighing: the density from T (u 0.5 K), p (u 50 Pa) and
    h (u 5 %), and the equation's own 22e-6 relative."""
    out = []
    for k, (t, p_hpa, h) in enumerate(rec["air"]):
        rho = cipm_2007(ufloat(t + 273.15, 0.5), ufloat(p_hpa * 100, 50.0), ufloat(h / 100, 0.05))
        u = math.sqrt(rho.std_dev ** 2 + (22e-6 * rho.nominal_value) ** 2)
        out.append(ufloat(rho.nominal_value, u, f"air density {k}"))
    return out


def composition(rec):
    scale_u = float(rec["scale_uncertainty"][:-1])
    w = [ufloat(float(x[:-1]), scale_u, f"weighing {i}") for i, x in enumerate(rec["weighings"])]
    volume = None
    if "air" in rec:
        volume = ufloat(rec["outer_volume_l"], 0.01 * rec["outer_volume_l"], "outer volume")
    if "reference_weighings" in rec:
        # Substitution weighing: the cylinder against a reference cylinder, read in turn;
        # the difference of the readings carries the mass, and the buoyancy acts on the
        # difference of the outer volumes.
        r = [ufloat(float(x[:-1]), scale_u, f"reference {i}") for i, x in enumerate(rec["reference_weighings"])]
        w = [wk - rk for wk, rk in zip(w, r)]
        if volume is not None:
            v_r = rec["reference_outer_volume_l"]
            volume = volume - ufloat(v_r, 0.01 * v_r, "reference outer volume")
    if "air" in rec:
        # m = W (1 - rho/8000) + rho V: rho in kg/m3 times V in L is in g.
        w = [wk * (1 - rho / 8000.0) + rho * volume for wk, rho in zip(w, air_densities(rec))]
    moles = {}
    for k, src in enumerate(rec["sources"], start=1):
        x = analysis(src, k)
        m_source = sum(x[g] * molar_mass(g) for g in x)
        n = (w[k] - w[k - 1]) / m_source
        for g in x:
            moles[g] = moles.get(g, 0) + x[g] * n
    total = sum(moles.values())
    return {g: moles[g] / total for g in moles}


RECORDS = {
    # The example of the interface: CO from a 1 % premix, CO2 and N2 with impurities.
    "flue-gas-made": {
        "recipe": "flue-gas-span", "cylinder": "FC-10-2291", "scale_uncertainty": "0.010g",
        "weighings": ["13412.000g", "13504.850g", "13942.450g", "15473.450g"],
        "sources": ["CO=1%±0.002%,N2=balance", "CO2=balance,N2=<10ppm", "N2=balance,O2=<2ppm,Ar=5ppm±1ppm"],
    },
    # An emission span: NO and SO2 premixes with relative uncertainties, water below its limit.
    "emission-span-made": {
        "recipe": "emission-span", "cylinder": "TL-5-0042", "scale_uncertainty": "0.005g",
        "weighings": ["7020.115g", "7041.320g", "7063.882g", "7802.406g"],
        "sources": ["NO=0.5%±0.3%rel,N2=balance,H2O=<5ppm", "SO2=0.2%±0.0005%,N2=balance",
                    "N2=balance,O2=<1ppm,H2O=<0.5ppm"],
    },
    # The flue-gas fill again, with the air at each weighing: the buoyancy correction.
    "flue-gas-buoyancy": {
        "recipe": "flue-gas-span", "cylinder": "FC-10-2291", "scale_uncertainty": "0.010g",
        "weighings": ["13412.000g", "13504.850g", "13942.450g", "15473.450g"],
        "sources": ["CO=1%±0.002%,N2=balance", "CO2=balance,N2=<10ppm", "N2=balance,O2=<2ppm,Ar=5ppm±1ppm"],
        "air": [(20.4, 1012.3, 41.0), (21.0, 1011.8, 43.0), (21.6, 1010.9, 44.0), (22.1, 1010.2, 46.0)],
        "outer_volume_l": 13.6,
    },
    # The flue-gas fill weighed by substitution against a reference cylinder of nearly the
    # same outer volume, with the air at each weighing: buoyancy largely cancels.
    "flue-gas-substitution": {
        "recipe": "flue-gas-span", "cylinder": "FC-10-2291", "scale_uncertainty": "0.010g",
        "weighings": ["13412.000g", "13504.860g", "13942.470g", "15473.490g"],
        "reference_weighings": ["13950.120g", "13950.130g", "13950.135g", "13950.150g"],
        "sources": ["CO=1%±0.002%,N2=balance", "CO2=balance,N2=<10ppm", "N2=balance,O2=<2ppm,Ar=5ppm±1ppm"],
        "air": [(20.4, 1012.3, 41.0), (21.0, 1011.8, 43.0), (21.6, 1010.9, 44.0), (22.1, 1010.2, 46.0)],
        "outer_volume_l": 13.6,
        "reference_outer_volume_l": 13.4,
    },
    # A detector test gas made from four pure-ish gases, one with an analysed impurity.
    "detector-gas-made": {
        "recipe": "detector-test-ch4-air", "cylinder": "DX-40-7781", "scale_uncertainty": "0.020g",
        "weighings": ["51230.00g", "51262.55g", "51680.10g", "53410.62g"],
        "sources": ["CH4=balance,C3H8=25ppm±2ppm,CO2=<10ppm", "O2=balance,Ar=0.3%±0.01%",
                    "N2=balance,Ar=40ppm±4ppm"],
    },
}


def ron(name, rec):
    lines = ["Record(", "    format: 1,", f'    recipe: "{rec["recipe"]}",', "    recipe_revision: 1,",
             f'    cylinder: "{rec["cylinder"]}",', f'    scale_uncertainty: "{rec["scale_uncertainty"]}",',
             "    weighings: [" + ", ".join(f'"{w}"' for w in rec["weighings"]) + "],", "    additions: ["]
    lines += [f'        (source: "{s}"),' for s in rec["sources"]]
    lines += ["    ],"]
    if "air" in rec:
        lines += ["    air: ["]
        lines += [f'        (temperature: "{t}C", pressure: "{p}hPa", humidity: "{h}%"),' for t, p, h in rec["air"]]
        lines += ["    ],", f'    cylinder_outer_volume: "{rec["outer_volume_l"]}L",']
    if "reference_weighings" in rec:
        lines += ["    reference_weighings: [" + ", ".join(f'"{w}"' for w in rec["reference_weighings"]) + "],"]
        lines += [f'    reference_outer_volume: "{rec["reference_outer_volume_l"]}L",']
    lines += [")", ""]
    return "\n".join(lines)


def main():
    out = {"generator": f"uncertainties {uncertainties.__version__}", "records": {}}
    for name, rec in RECORDS.items():
        with open(os.path.join(ROOT, "tests", "records", name + ".ron"), "w") as f:
            f.write(ron(name, rec))
        x = composition(rec)
        out["records"][name] = {g: {"mole_fraction": v.nominal_value, "standard_uncertainty": v.std_dev}
                                for g, v in x.items()}
    with open(os.path.join(ROOT, "tests", "fixtures", "uncertainties_records.json"), "w") as f:
        json.dump(out, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
