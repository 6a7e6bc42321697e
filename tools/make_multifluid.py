#!/usr/bin/env python3
"""Regenerate src/thermo/multifluid.ron: the multi-fluid Helmholtz model's data.

Every catalogue gas that has a published reference equation of state in the fluid files
shipped with the `teqp` package (PyPI; the same files CoolProp carries) gets its residual
Helmholtz terms, its reducing state and the citation key the file names (BibTeX key of
the publication). The binary reducing parameters (beta_T, gamma_T, beta_V, gamma_V) and
the departure functions come from the mixture files beside them (GERG-2008, Kunz and
Wagner 2012, for its pairs; other published pairs with their own keys).

A catalogue gas whose equation is not among those files but is in CoolProp's own fluid
library (chlorine: Thol et al., AIChE J. 2021) takes it from there
(`CoolProp.get_fluid_param_string(name, "JSON")`, the same file format).

Gases with no reference equation in either are listed as "cubic" in the model (their
residual Helmholtz energy is Peng-Robinson's, see src/thermo/multifluid.rs); pairs with no
published parameters use the estimate named in the crate.

Run:  pip install teqp==0.23.2 CoolProp==8.0.0 && python3 tools/make_multifluid.py
"""
import json
import os
import re

import CoolProp
import CoolProp.CoolProp as CP
import teqp

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
DATA = os.path.join(os.path.dirname(teqp.__file__), "fluiddata", "dev")

# Reference equations deliberately not used: the associating term of methanol's equation
# (Piazza and Federico 2013) is not implemented; methanol stays on the cubic form.
SKIPPED = {"Methanol": "its equation's associating term is not implemented here"}

TERM_KEYS = {
    "ResidualHelmholtzPower": ("Power", ["n", "d", "t", "l"]),
    "ResidualHelmholtzGaussian": ("Gaussian", ["n", "d", "t", "eta", "epsilon", "beta", "gamma"]),
    "ResidualHelmholtzExponential": ("Exponential", ["n", "d", "t", "g", "l"]),
    "ResidualHelmholtzNonAnalytic": ("NonAnalytic", ["n", "a", "b", "beta", "A", "B", "C", "D"]),
    "ResidualHelmholtzGaoB": ("GaoB", ["n", "d", "t", "eta", "beta", "gamma", "epsilon", "b"]),
}


def catalogue_ids():
    text = open(os.path.join(ROOT, "src", "gas", "catalogue.ron")).read()
    return [(m.group(1), m.group(2)) for m in re.finditer(r'id: "([^"]*)".*?cas: "([^"]*)"', text, re.S)]


def num(x):
    return repr(float(x))


def terms_ron(terms):
    out = []
    for t in terms:
        kind, keys = TERM_KEYS[t["type"]]
        for k in range(len(t["n"])):
            out.append("%s(%s)" % (kind, ", ".join(num(t[key][k]) for key in keys)))
    return out


def main():
    fluids = {}
    for path in sorted(os.listdir(os.path.join(DATA, "fluids"))):
        d = json.load(open(os.path.join(DATA, "fluids", path)))
        fluids[d["INFO"]["CAS"]] = (path[:-5], d)
    # CoolProp's own library for the catalogue gases teqp's files do not carry.
    wanted = {cas for _, cas in catalogue_ids()}
    for name in CP.get_global_param_string("fluids_list").split(","):
        cas = CP.get_fluid_param_string(name, "CAS")
        if cas in wanted and cas not in fluids:
            d = json.loads(CP.get_fluid_param_string(name, "JSON"))
            fluids[cas] = (name, d[0] if isinstance(d, list) else d)
    pure, by_cas, names = [], {}, {}
    for gid, cas in catalogue_ids():
        if cas not in fluids or fluids[cas][0] in SKIPPED:
            continue
        name, d = fluids[cas]
        eos = d["EOS"][0]
        types = {t["type"] for t in eos["alphar"]}
        unknown = types - set(TERM_KEYS)
        if unknown:
            raise SystemExit("%s: term types %s not implemented" % (name, unknown))
        red = eos["STATES"]["reducing"]
        pure.append(
            "    (id: %s, file: %s, source: %s, t_r: %s, rho_r: %s, terms: [\n%s\n    ])"
            % (
                json.dumps(gid),
                json.dumps(name),
                json.dumps(eos["BibTeX_EOS"]),
                num(red["T"]),
                num(red["rhomolar"]),
                ",\n".join("        " + t for t in terms_ron(eos["alphar"])),
            )
        )
        by_cas[cas] = gid
        names[name.lower()] = gid
    departures_used = set()
    pairs = []
    for p in json.load(open(os.path.join(DATA, "mixtures", "mixture_binary_pairs.json"))):
        a, b = by_cas.get(p["CAS1"]), by_cas.get(p["CAS2"])
        if not (a and b):
            continue
        function = p.get("function") if p.get("F", 0.0) != 0.0 else None
        if function:
            departures_used.add(function)
        pairs.append(
            "    (a: %s, b: %s, beta_t: %s, gamma_t: %s, beta_v: %s, gamma_v: %s, f: %s, departure: %s, source: %s)"
            % (
                json.dumps(a),
                json.dumps(b),
                num(p["betaT"]),
                num(p["gammaT"]),
                num(p["betaV"]),
                num(p["gammaV"]),
                num(p.get("F", 0.0)),
                ("Some(%s)" % json.dumps(function)) if function else "None",
                json.dumps(p["BibTeX"]),
            )
        )
    departures = []
    for dep in json.load(open(os.path.join(DATA, "mixtures", "mixture_departure_functions.json"))):
        if dep["Name"] not in departures_used:
            continue
        rows = []
        for k in range(len(dep["n"])):
            if dep["type"] == "GERG-2008":
                if k < dep["Npower"]:
                    rows.append("Power(%s, %s, %s, 0.0)" % (num(dep["n"][k]), num(dep["d"][k]), num(dep["t"][k])))
                else:
                    rows.append(
                        "GergExp(%s)"
                        % ", ".join(num(dep[key][k]) for key in ["n", "d", "t", "eta", "epsilon", "beta", "gamma"])
                    )
            elif dep["type"] == "Exponential":
                rows.append("Power(%s)" % ", ".join(num(dep[key][k]) for key in ["n", "d", "t", "l"]))
            else:
                raise SystemExit("departure type %s not implemented" % dep["type"])
        departures.append(
            "    (name: %s, source: %s, terms: [\n%s\n    ])"
            % (json.dumps(dep["Name"]), json.dumps(dep["BibTeX"]), ",\n".join("        " + r for r in rows))
        )
    header = (
        "// The multi-fluid Helmholtz model's data. Generated by tools/make_multifluid.py from the\n"
        "// fluid and mixture files of teqp %s (the same files CoolProp carries; chlorine from\n"
        "// CoolProp %s's library); `source` is the citation key of each equation, binary\n"
        "// parameter set and departure function.\n"
        "// Catalogue gases without an entry here take the cubic form; see multifluid.rs.\n"
        % (teqp.__version__, CoolProp.__version__)
    )
    text = header + "(\n  fluids: [\n%s\n  ],\n  pairs: [\n%s\n  ],\n  departures: [\n%s\n  ],\n)\n" % (
        ",\n".join(pure),
        ",\n".join(pairs),
        ",\n".join(departures),
    )
    out = os.path.join(ROOT, "src", "thermo", "multifluid.ron")
    open(out, "w").write(text)
    print("%d fluids, %d pairs, %d departure functions -> %s" % (len(pure), len(pairs), len(departures), out))


if __name__ == "__main__":
    main()
