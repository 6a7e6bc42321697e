#!/usr/bin/env python3
"""Regenerate src/gas/catalogue.ron and src/thermo/kij_pr.ron.

The critical constants, acentric factors, normal boiling points and vapour-pressure
coefficients come from the data sets that the `chemicals` library (PyPI) carries, each
value tagged with the data set it was taken from. Names, aliases and the tabulated van der
Waals constants (CRC Handbook table "Van der Waals Constants for Gases") are kept here.

Run:  pip install chemicals==1.5.2 thermo==0.6.1 && python3 tools/make_catalogue.py
To add a gas: add a row to GASES below, run the script, run `cargo test`.
"""
import math
import os

import chemicals
import numpy
import CoolProp
import CoolProp.CoolProp as CP
from chemicals import acentric, critical, phase_change
from chemicals import vapor_pressure as vp
from thermo.interaction_parameters import IPDB

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)

# id, CAS, formula (element counts, Hill-free, as written), name, extra aliases,
# tabulated van der Waals (a in bar L2/mol2, b in L/mol) from the CRC Handbook table or None.
GASES = [
    ("N2", "7727-37-9", "N2", "nitrogen", [], (1.370, 0.0387)),
    ("O2", "7782-44-7", "O2", "oxygen", [], (1.382, 0.03186)),
    ("Ar", "7440-37-1", "Ar", "argon", [], (1.355, 0.03201)),
    ("He", "7440-59-7", "He", "helium", [], (0.0346, 0.0238)),
    ("Ne", "7440-01-9", "Ne", "neon", [], (0.208, 0.01672)),
    ("Kr", "7439-90-9", "Kr", "krypton", [], (2.325, 0.0396)),
    ("Xe", "7440-63-3", "Xe", "xenon", [], None),
    ("H2", "1333-74-0", "H2", "hydrogen", [], (0.2453, 0.02651)),
    ("CO", "630-08-0", "CO", "carbon monoxide", [], (1.472, 0.0395)),
    ("CO2", "124-38-9", "CO2", "carbon dioxide", [], (3.658, 0.0429)),
    ("CH4", "74-82-8", "CH4", "methane", [], (2.303, 0.0431)),
    ("C2H6", "74-84-0", "C2H6", "ethane", [], (5.580, 0.0651)),
    ("C3H8", "74-98-6", "C3H8", "propane", [], None),
    ("n-C4H10", "106-97-8", "C4H10", "n-butane", ["butane"], (13.89, 0.1164)),
    ("i-C4H10", "75-28-5", "C4H10", "isobutane", ["i-butane", "2-methylpropane"], (13.32, 0.1164)),
    ("n-C5H12", "109-66-0", "C5H12", "n-pentane", ["pentane"], (19.09, 0.1449)),
    ("i-C5H12", "78-78-4", "C5H12", "isopentane", ["i-pentane", "2-methylbutane"], None),
    ("n-C6H14", "110-54-3", "C6H14", "n-hexane", ["hexane"], (24.84, 0.1744)),
    ("n-C7H16", "142-82-5", "C7H16", "n-heptane", ["heptane"], (31.06, 0.2049)),
    ("n-C8H18", "111-65-9", "C8H18", "n-octane", ["octane"], (37.88, 0.2374)),
    ("n-C9H20", "111-84-2", "C9H20", "n-nonane", ["nonane"], None),
    ("n-C10H22", "124-18-5", "C10H22", "n-decane", ["decane"], (52.74, 0.3043)),
    ("C2H4", "74-85-1", "C2H4", "ethylene", ["ethene"], (4.612, 0.0582)),
    ("C3H6", "115-07-1", "C3H6", "propylene", ["propene"], None),
    ("C2H2", "74-86-2", "C2H2", "acetylene", ["ethyne"], (4.516, 0.05218)),
    ("C4H6", "106-99-0", "C4H6", "1,3-butadiene", ["butadiene"], None),
    ("NO", "10102-43-9", "NO", "nitric oxide", ["nitrogen monoxide"], (1.46, 0.0289)),
    ("NO2", "10102-44-0", "NO2", "nitrogen dioxide", [], (5.36, 0.0443)),
    ("N2O", "10024-97-2", "N2O", "nitrous oxide", ["dinitrogen monoxide"], (3.852, 0.04435)),
    ("SO2", "7446-09-5", "SO2", "sulfur dioxide", ["sulphur dioxide"], (6.865, 0.05679)),
    ("H2S", "7783-06-4", "H2S", "hydrogen sulfide", ["hydrogen sulphide"], (4.544, 0.04339)),
    ("COS", "463-58-1", "COS", "carbonyl sulfide", ["carbonyl sulphide"], None),
    ("NH3", "7664-41-7", "NH3", "ammonia", [], (4.225, 0.03713)),
    ("HCl", "7647-01-0", "HCl", "hydrogen chloride", [], (3.700, 0.04061)),
    ("Cl2", "7782-50-5", "Cl2", "chlorine", [], (6.343, 0.05422)),
    ("SF6", "2551-62-4", "SF6", "sulfur hexafluoride", ["sulphur hexafluoride"], (7.857, 0.08786)),
    ("CF4", "75-73-0", "CF4", "carbon tetrafluoride", ["tetrafluoromethane"], None),
    ("NF3", "7783-54-2", "NF3", "nitrogen trifluoride", [], (3.58, 0.05453)),
    ("H2O", "7732-18-5", "H2O", "water", [], (5.537, 0.03049)),
    ("CH3OH", "67-56-1", "CH4O", "methanol", [], (9.476, 0.0659)),
    ("C2H5OH", "64-17-5", "C2H6O", "ethanol", [], (12.56, 0.0871)),
    ("C6H6", "71-43-2", "C6H6", "benzene", [], (18.82, 0.1193)),
    ("C7H8", "108-88-3", "C7H8", "toluene", ["methylbenzene"], None),
]

REFERENCES = {
    "IUPAC": "IUPAC critical-property series: Ambrose, Tsonopoulos, Young et al., J. Chem. Eng. Data 40 (1995) onwards (via chemicals 'IUPAC')",
    "MATTHEWS": "Matthews, J. F., The critical constants of inorganic substances, Chem. Rev. 72 (1972) 71-100 (via chemicals 'MATTHEWS')",
    "HEOS": "Critical points of the reference Helmholtz equations of state in CoolProp (via chemicals 'HEOS')",
    "PSRK": "Horstmann, Jabloniec, Krafczyk, Fischer, Gmehling, PSRK group contribution equation of state, Fluid Phase Equilib. 227 (2005) 157-164 (via chemicals 'PSRK')",
    "YAWS": "Yaws, C. L., Thermophysical Properties of Chemicals and Hydrocarbons, 2nd ed. (2014) (via chemicals 'YAWS')",
    "CRC_INORG": "CRC Handbook of Chemistry and Physics, 95th ed., physical constants of inorganic compounds (via chemicals 'CRC_INORG')",
    "CRC_ORG": "CRC Handbook of Chemistry and Physics, 95th ed., physical constants of organic compounds (via chemicals 'CRC_ORG')",
    "COMMON_CHEMISTRY": "CAS Common Chemistry (via chemicals 'COMMON_CHEMISTRY')",
    "WEBBOOK": "NIST Chemistry WebBook (via chemicals 'WEBBOOK')",
    "PERRY_2_8": "Green & Perry, Perry's Chemical Engineers' Handbook, 8th ed., Table 2-8, DIPPR equation 101 (via chemicals Psat_data_Perrys2_8)",
    "LEE_KESLER": "Lee & Kesler, AIChE J. 21 (1975) 510, computed from Tc, Pc and the acentric factor (estimate)",
    "CRC_VDW": "CRC Handbook of Chemistry and Physics, table 'Van der Waals Constants for Gases' (from Tc and Pc in its critical-constants table)",
    "IUPAC_2021": "IUPAC/CIAAW standard atomic weights 2021, conventional values; Ar 39.948 (atmospheric argon)",
    "CHEMSEP_PR": "ChemSep Peng-Robinson binary interaction parameters, Kooijman & Taylor, ChemSep database (via thermo IPDB 'ChemSep PR')",
    "REFERENCE_FIT": "Wagner's form fitted by tools/make_catalogue.py to the saturation pressures of the gas's reference equation of state (CoolProp %s; the equation is named by `fillwright gases --format json`), within 0.3 %% of them from the triple point (or 0.4 Tc) to the critical point" % CoolProp.__version__,
    "VDI_PPDS": "VDI Heat Atlas, 2nd ed. (2010), PPDS vapour-pressure equation (via chemicals Psat_data_VDI_PPDS_3)",
    "HEOS_FIT": "Wagner's form fitted by tools/make_catalogue.py to thermo's 'HEOS_FIT' vapour-pressure curve (chemicals' fit to an equation of state CoolProp no longer ships), within 0.3 %% of it" ,
}

# Critical constants and acentric factors taken from the reference equations of state
# (chemicals 'HEOS': CoolProp's critical points) where the usual first choice is off
# from them beyond the tolerances of tests/catalogue_reference.rs: Tc 0.2 %, Pc 1 %,
# omega 0.01. Each with what the first choice gave.
CRITICAL_FROM_REFERENCE = {
    "Ne": "MATTHEWS Pc 2.756 MPa, 3.5 % above the reference equation's 2.662 MPa (Thol 2019)",
    "n-C10H22": "IUPAC Tc 611.7 K; the reference equation (Lemmon & Span 2006) has 617.7 K",
    "COS": "MATTHEWS 375.0 K, 5.877 MPa; the reference equation (Lemmon & Span 2006) has 378.77 K, 6.37 MPa",
    "CF4": "IUPAC Pc 3.68 MPa, 1.9 % below the reference equation's 3.75 MPa (Platzer 1990)",
    "NF3": "MATTHEWS Pc 4.529 MPa; chemicals 'HEOS', Yaws and Pina-Martinez give 4.461 MPa",
    "CH3OH": "IUPAC 512.5 K, 8.084 MPa; the reference equation (Piazza & Federico 2013) has 513.38 K, 8.216 MPa",
    "C2H5OH": "IUPAC 514.0 K, 6.137 MPa; the reference equation (Schroeder 2014) has 514.71 K, 6.268 MPa",
}
OMEGA_FROM_REFERENCE = {
    "SF6": "PSRK 0.150; chemicals 'HEOS' (the reference equation, Guder & Wagner 2009) gives 0.218",
    "N2O": "PSRK 0.173; chemicals 'HEOS' (the reference equation, Lemmon & Span 2006) gives 0.162",
    "NF3": "PSRK 0.102; chemicals 'HEOS' gives 0.126 (YAWS 0.120, from the vapour pressure 0.127)",
    "HCl": "PSRK 0.120; chemicals 'HEOS' (the reference equation, Thol 2018) gives 0.129",
}

PREFER_CRITICAL = ["IUPAC", "MATTHEWS", "HEOS", "PSRK", "YAWS"]
PREFER_OMEGA = ["PSRK", "HEOS", "YAWS"]
PREFER_TB = ["CRC_ORG", "CRC_INORG", "HEOS", "COMMON_CHEMISTRY", "WEBBOOK", "YAWS"]
TB_FROM_REFERENCE = {
    "H2S": "CRC_INORG 213.6 K; the reference equation (Lemmon & Span 2006) 212.85 K, NIST WebBook 212.87 K",
}


def critical_method(gid, cas):
    if gid in CRITICAL_FROM_REFERENCE:
        return "HEOS"
    return pick(critical.Tc_methods(cas), PREFER_CRITICAL)


def omega_method(gid, cas):
    if gid in OMEGA_FROM_REFERENCE:
        return "HEOS"
    return pick(acentric.omega_methods(cas), PREFER_OMEGA)


def coolprop_name(cas):
    """CoolProp's name of the fluid with this CAS number, or None."""
    try:
        return CP.get_fluid_param_string(cas, "name")
    except ValueError:
        return None


# Exponents of the fitted Wagner form: ln(p/pc) = (Tc/T) sum n_i theta^t_i.
WAGNER_T = [1.0, 1.5, 2.0, 2.5, 3.5, 5.0, 7.0]


def reference_fit(cas):
    """Wagner's form fitted to the reference equation's saturation pressures (linear least
    squares on 80 points from the triple point or 0.4 Tc to just below the critical point), or None
    where CoolProp has no equation for the gas. Returns (Tc, pc, n, Tmin, worst relative
    deviation)."""
    name = coolprop_name(cas)
    if name is None:
        return None
    tc, pc = CP.PropsSI("Tcrit", name), CP.PropsSI("pcrit", name)
    t_min = max(CP.PropsSI("Ttriple", name), 0.4 * tc)
    ts = numpy.linspace(t_min, 0.9995 * tc, 80)
    ps = numpy.array([CP.PropsSI("P", "T", t, "Q", 0, name) for t in ts])
    n, worst = wagner_fit(ts, ps, tc, pc)
    if worst > 3e-3:
        raise SystemExit("%s: the Wagner fit is %.3g off" % (name, worst))
    return tc, pc, n, t_min, worst


def wagner_fit(ts, ps, tc, pc):
    """n of Wagner's form through (ts, ps) by linear least squares; (n, worst deviation)."""
    theta = 1.0 - ts / tc
    a = numpy.array([[th ** e for e in WAGNER_T] for th in theta])
    y = numpy.log(ps / pc) * ts / tc
    n, *_ = numpy.linalg.lstsq(a, y, rcond=None)
    fitted = pc * numpy.exp((a @ n) * tc / ts)
    return [float(v) for v in n], float(numpy.max(numpy.abs(fitted / ps - 1.0)))


def heos_fit(cas):
    """Wagner's form fitted to thermo's HEOS_FIT curve where the gas has one, else None."""
    from thermo import VaporPressure

    v = VaporPressure(CASRN=cas)
    if "HEOS_FIT" not in v.all_methods:
        return None
    v.method = "HEOS_FIT"
    lo, hi = v.T_limits["HEOS_FIT"]
    tc, pc = hi, v(hi)
    ts = numpy.linspace(max(lo, 0.4 * tc), 0.999 * tc, 80)
    ps = numpy.array([v(t) for t in ts])
    n, worst = wagner_fit(ts, ps, tc, pc)
    if worst > 3e-3:
        raise SystemExit("%s: the Wagner fit is %.3g off" % (cas, worst))
    return tc, pc, n, float(ts[0]), worst


def pick(methods, prefer):
    for m in prefer:
        if m in methods:
            return m
    raise SystemExit(f"no preferred method among {methods}")


# ChemSep values replaced by a documented choice. N2/n-octane is listed as -0.4, far outside
# its neighbours (N2/n-heptane +0.1441, N2/n-decane +0.1122, both ChemSep): it put the PR
# cricondentherm of n-octane traces in N2 14-20 K below the multi-fluid reference. The value
# used is the linear interpolation in carbon number between those two neighbours.
# The same for the other outliers (values far outside their neighbours' range), each
# replaced by an interpolation between listed neighbours or by the classical default 0.
# tests/multifluid.rs compares the PR dew point of the H2/n-butane pair with the
# multi-fluid reference (CoolProp, GERG-2008 parameters).
KIJ_REPLACED = {
    ("N2", "n-C8H18"): (0.1335, "interpolated in carbon number between ChemSep N2/n-C7H16 and N2/n-C10H22"),
    ("H2", "n-C4H10"): (
        -0.0974,
        "interpolated in carbon number between ChemSep H2/C3H8 (-0.1311) and H2/n-C6H14 (-0.03); the listed value "
        "put the dew point of 2 % n-butane in H2 at 30 bar 4.0 K below the multi-fluid reference",
    ),
    ("H2", "C7H8"): (0.0, "the classical default 0: no H2/aromatic pair is listed to compare with"),
    ("He", "CO"): (
        0.0,
        "the classical default 0, as for He/N2 (not listed); the listed value puts the dew point of 10 % CO in He "
        "at 30 bar near 41 K, below CO's triple point (68 K)",
    ),
    ("C3H6", "C2H2"): (0.0, "the classical default 0: C2H4/C2H2, the nearest listed pair, has +0.065"),
}


def replaced_kij(id_a, id_b):
    """The replacement for a pair, if any: (k_ij, why)."""
    return KIJ_REPLACED.get((id_a, id_b)) or KIJ_REPLACED.get((id_b, id_a))


def kij_matrix(cas):
    """The ChemSep PR k_ij matrix for a list of CAS numbers, 0 where none is listed."""
    n = len(cas)
    k = [[0.0] * n for _ in range(n)]
    for a in range(n):
        for b in range(n):
            if a != b:
                try:
                    k[a][b] = float(IPDB.get_ip_specific("ChemSep PR", [cas[a], cas[b]], "kij") or 0.0)
                except Exception:
                    pass
                ids = {c: gid for gid, c, *_ in GASES}
                swap = replaced_kij(ids.get(cas[a]), ids.get(cas[b]))
                if swap:
                    k[a][b] = swap[0]
    return k


def num(x):
    r = repr(float(x))
    return r


def q(s):
    return '"' + s.replace("\\", "\\\\").replace('"', '\\"') + '"'


def main():
    out = []
    out.append("// Gas catalogue of fillwright. Generated by tools/make_catalogue.py from")
    out.append(f"// chemicals {chemicals.__version__}; edit the script, not this file.")
    out.append("// Units: K, Pa, g/mol, bar L2/mol2, L/mol. Every value names its source key;")
    out.append("// the keys are spelled out in `references`.")
    out.append("Catalogue(")
    out.append("    format: 1,")
    out.append("    references: {")
    for k in sorted(REFERENCES):
        out.append(f"        {q(k)}: {q(REFERENCES[k])},")
    out.append("    },")
    out.append("    gases: [")
    for gid, cas, formula, name, aliases, vdw in GASES:
        mc = critical_method(gid, cas)
        tc = critical.Tc(cas, method=mc)
        pc = critical.Pc(cas, method=mc)
        mo = omega_method(gid, cas)
        omega = acentric.omega(cas, method=mo)
        mb = "HEOS" if gid in TB_FROM_REFERENCE else pick(phase_change.Tb_methods(cas), PREFER_TB)
        tb = phase_change.Tb(cas, method=mb)
        out.append("        Gas(")
        out.append(f"            id: {q(gid)},")
        out.append(f"            name: {q(name)},")
        out.append(f"            aliases: [{', '.join(q(a) for a in aliases)}],")
        out.append(f"            cas: {q(cas)},")
        out.append(f"            formula: {q(formula)},")
        out.append(f"            critical_temperature_k: {num(tc)},")
        out.append(f"            critical_pressure_pa: {num(pc)},")
        out.append(f"            critical_source: {q(mc)},")
        out.append(f"            acentric_factor: {num(omega)},")
        out.append(f"            acentric_source: {q(mo)},")
        out.append(f"            normal_boiling_point_k: {num(tb)},")
        out.append(f"            boiling_source: {q(mb)},")
        fit = reference_fit(cas)
        if gid in CRITICAL_FROM_REFERENCE:
            out.append(f"            // critical constants: {CRITICAL_FROM_REFERENCE[gid]}")
        if gid in OMEGA_FROM_REFERENCE:
            out.append(f"            // acentric factor: {OMEGA_FROM_REFERENCE[gid]}")
        if gid in TB_FROM_REFERENCE:
            out.append(f"            // normal boiling point: {TB_FROM_REFERENCE[gid]}")
        source = "REFERENCE_FIT"
        if fit is None:
            fit = heos_fit(cas)
            source = "HEOS_FIT"
        if fit is not None:
            f_tc, f_pc, n, t_min, worst = fit
            out.append(f"            // vapour pressure within {worst * 100:.3f} % of the curve fitted")
            out.append(
                "            vapour_pressure: Wagner(t_r_k: %s, p_r_pa: %s, n: [%s], t: [%s], tau_factor: true, t_min_k: %s, t_max_k: %s, source: %s),"
                % (
                    num(f_tc),
                    num(f_pc),
                    ", ".join(num(v) for v in n),
                    ", ".join(num(v) for v in WAGNER_T),
                    num(t_min),
                    num(f_tc),
                    q(source),
                )
            )
        elif cas in vp.Psat_data_VDI_PPDS_3.index and cas not in vp.Psat_data_Perrys2_8.index:
            row = vp.Psat_data_VDI_PPDS_3.loc[cas]
            out.append(
                "            vapour_pressure: Wagner(t_r_k: %s, p_r_pa: %s, n: [%s], t: [1.0, 1.5, 2.5, 5.0], tau_factor: true, t_min_k: %s, t_max_k: %s, source: \"VDI_PPDS\"),"
                % (num(row["Tc"]), num(row["Pc"]), ", ".join(num(row[k]) for k in "ABCD"), num(row["Tm"]), num(row["Tc"]))
            )
        elif cas in vp.Psat_data_Perrys2_8.index:
            row = vp.Psat_data_Perrys2_8.loc[cas]
            c = [float(row[f"C{i}"]) for i in range(1, 6)]
            out.append(
                "            vapour_pressure: Dippr101(c1: %s, c2: %s, c3: %s, c4: %s, c5: %s, t_min_k: %s, t_max_k: %s, source: \"PERRY_2_8\"),"
                % tuple(num(v) for v in c + [row["Tmin"], row["Tmax"]])
            )
        else:
            out.append('            vapour_pressure: LeeKesler(source: "LEE_KESLER"),')
        if vdw:
            out.append(f"            van_der_waals: Some((a_bar_l2_per_mol2: {num(vdw[0])}, b_l_per_mol: {num(vdw[1])}, source: \"CRC_VDW\")),")
        else:
            out.append("            van_der_waals: None,")
        out.append("        ),")
    out.append("    ],")
    out.append(")")
    with open(os.path.join(ROOT, "src", "gas", "catalogue.ron"), "w") as f:
        f.write("\n".join(out) + "\n")

    # Peng-Robinson k_ij from ChemSep, for every pair of catalogue gases that has one.
    cas_to_id = {cas: gid for gid, cas, *_ in GASES}
    lines = [
        "// Peng-Robinson binary interaction parameters k_ij (symmetric). Generated by",
        "// tools/make_catalogue.py from thermo's IPDB table 'ChemSep PR'",
        f"// (source: {REFERENCES['CHEMSEP_PR']}).",
        "// Pairs not listed have k_ij = 0.",
        "[",
    ]
    ids = list(cas_to_id)
    for i, a in enumerate(ids):
        for b in ids[i + 1:]:
            try:
                k = IPDB.get_ip_specific("ChemSep PR", [a, b], "kij")
            except Exception:
                continue
            swap = replaced_kij(cas_to_id[a], cas_to_id[b])
            if swap:
                lines.append(f"    // {swap[1]} (ChemSep lists {num(k)}, an outlier)")
                k = swap[0]
                if math.isclose(k, 0.0):
                    lines.append(f"    ({q(cas_to_id[a])}, {q(cas_to_id[b])}, 0.0),")
                    continue
            if k and not math.isclose(k, 0.0):
                lines.append(f"    ({q(cas_to_id[a])}, {q(cas_to_id[b])}, {num(k)}),")
    lines.append("]")
    with open(os.path.join(ROOT, "src", "thermo", "kij_pr.ron"), "w") as f:
        f.write("\n".join(lines) + "\n")


if __name__ == "__main__":
    main()
