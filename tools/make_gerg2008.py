#!/usr/bin/env python3
"""Regenerate src/thermo/gerg2008_data.rs: GERG-2008 written as a multi-fluid data set.

GERG-2008 (Kunz and Wagner, J. Chem. Eng. Data 57 (2012) 3032; ISO 20765-2) is itself a
multi-fluid Helmholtz model: 21 pure-fluid equations, binary reducing parameters and
departure functions. The `aga8` crate (a port of NIST's AGA8 code) evaluates it for
densities and properties but gives no composition derivatives; written in the form of
src/thermo/multifluid.rs the same equation yields fugacities (by dual numbers), so the
phase equilibria of GERG-2008 are GERG-2008's own.

The numbers are read from the aga8 crate's constant tables (the version in Cargo.lock):
- pure fluid i: n δ^d τ^t for the polynomial terms, n δ^d τ^t exp(−δ^c) for the others
  (the crate takes the temperature exponents of propane for the fluids that share its
  short form, as this does); reducing state T_c,i and ρ_c,i;
- pair i < j: the crate stores β², β γ √(T_c,i T_c,j) and β γ (ρ_c,i^(−1/3) + ρ_c,j^(−1/3))³/8;
  β and γ are recovered from them;
- departure function k: n δ^d τ^t, and n δ^d τ^t exp(c δ² + e δ + g), written as the
  multi-fluid model's GergExp(n e^g, d, t, η = −c, ε = 0, β = −e, γ = 0).
The test `gerg2008_as_multifluid_is_the_aga8_crate` checks pressures against the crate.

Run:  python3 tools/make_gerg2008.py
"""
import json
import math
import os
import re
import subprocess

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)

# The crate's fluid order, as our catalogue ids.
IDS = ["CH4", "N2", "CO2", "C2H6", "C3H8", "i-C4H10", "n-C4H10", "i-C5H12", "n-C5H12", "n-C6H14",
       "n-C7H16", "n-C8H18", "n-C9H20", "n-C10H22", "H2", "O2", "CO", "H2O", "H2S", "He", "Ar"]
# Fluids whose terms the crate evaluates with propane's temperature exponents.
OWN_EXPONENTS = {1, 2, 3, 4, 15, 18, 20}


def crate_source():
    meta = json.loads(subprocess.check_output(
        ["cargo", "metadata", "--format-version", "1", "--locked"], cwd=ROOT))
    for p in meta["packages"]:
        if p["name"] == "aga8":
            return os.path.join(os.path.dirname(p["manifest_path"]), "src", "gerg2008const.rs"), p["version"]
    raise SystemExit("aga8 is not a dependency")


def tables(path):
    text = re.sub(r"//[^\n]*", "", open(path).read())
    out = {}
    for m in re.finditer(r"const (\w+): [^=]+= (.*?);", text, re.S):
        out[m.group(1)] = eval(m.group(2).replace("_", ""))
    return out


def num(x):
    return repr(float(x))


def main():
    path, version = crate_source()
    c = tables(path)
    n = c["NC_GERG"]
    lines = [
        "// GERG-2008 as a multi-fluid data set. Made by tools/make_gerg2008.py from the constant",
        "// tables of the aga8 crate %s (NIST's AGA8 code); do not edit." % version,
        "pub(super) static GERG2008: Data = Data {",
        "    fluids: &[",
    ]
    for i in range(1, n + 1):
        te = i if i in OWN_EXPONENTS else 5
        terms = []
        for k in range(1, c["KPOL"][i] + c["KEXP"][i] + 1):
            l = 0 if k <= c["KPOL"][i] else c["COIK"][i][k]
            terms.append("Power(%s, %s, %s, %s)" % (num(c["NOIK"][i][k]), num(c["DOIK"][i][k]),
                                                    num(c["TOIK"][te][k]), num(l)))
        lines.append('        FluidData { id: "%s", file: "GERG-2008", source: "Kunz-JCED-2012", t_r: %s, '
                     'rho_r: %s, terms: &[%s] },' % (IDS[i - 1], num(c["TC"][i]), num(c["DC"][i] * 1000.0),
                                                     ", ".join(terms)))
    lines += ["    ],", "    pairs: &["]
    used = set()
    for i in range(1, n + 1):
        for j in range(i + 1, n + 1):
            bt, bv = math.sqrt(c["BTIJ"][i][j]), math.sqrt(c["BVIJ"][i][j])
            t_ij = math.sqrt(c["TC"][i] * c["TC"][j])
            v_ij = (c["DC"][i] ** (-1 / 3) + c["DC"][j] ** (-1 / 3)) ** 3 / 8
            gt, gv = c["GTIJ"][i][j] / (bt * t_ij), c["GVIJ"][i][j] / (bv * v_ij)
            mn = c["MNUMB"][i][j]
            f = c["FIJ"][i][j] if mn > 0 else 0.0
            dep = 'Some("GERG-2008 departure %d")' % mn if mn > 0 and f != 0.0 else "None"
            if mn > 0 and f != 0.0:
                used.add(mn)
            lines.append('        PairData { a: "%s", b: "%s", beta_t: %s, gamma_t: %s, beta_v: %s, gamma_v: %s, '
                         'f: %s, departure: %s, source: "Kunz-JCED-2012" },'
                         % (IDS[i - 1], IDS[j - 1], num(bt), num(gt), num(bv), num(gv), num(f), dep))
    lines += ["    ],", "    departures: &["]
    for mn in sorted(used):
        terms = []
        for k in range(1, c["KPOLIJ"][mn] + c["KEXPIJ"][mn] + 1):
            nk, d, t = c["NIJK"][mn][k], c["DIJK"][mn][k], c["TIJK"][mn][k]
            if k <= c["KPOLIJ"][mn]:
                terms.append("Power(%s, %s, %s, 0.0)" % (num(nk), num(d), num(t)))
            else:
                terms.append("GergExp(%s, %s, %s, %s, 0.0, %s, 0.0)" % (
                    num(nk * math.exp(c["GIJK"][mn][k])), num(d), num(t), num(-c["CIJK"][mn][k]),
                    num(-c["EIJK"][mn][k])))
        lines.append('        DepartureData { name: "GERG-2008 departure %d", source: "Kunz-JCED-2012", '
                     'terms: &[%s] },' % (mn, ", ".join(terms)))
    lines += ["    ],", "};", ""]
    with open(os.path.join(ROOT, "src", "thermo", "gerg2008_data.rs"), "w") as out:
        out.write("\n".join(lines))


if __name__ == "__main__":
    main()
