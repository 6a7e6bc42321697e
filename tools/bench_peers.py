#!/usr/bin/env python3
"""Speed of fillwright and of the reference libraries, measured side by side in one run.

Runs fillwright's `examples/bench_table` (release build) and times the same cases with
CoolProp, thermo and teqp from PyPI on the same machine right after, so that the shared
machine's swings hit both alike. Prints a Markdown table (times per call; "n/a" where a
library has no direct way to do the case). Cases are defined in `src/speed.rs`:

- density at 15 °C and 150 bar of a 4- and a 9-component gas: Peng-Robinson (CoolProp's PR
  backend, thermo's PRMIX); GERG-2008 (teqp's GERG2008resid by Newton on p(rho) from its
  residual Helmholtz derivatives, and the aga8 crate in Rust, timed by bench_table); the
  multi-fluid model (CoolProp's HEOS backend: reference pure-fluid equations with GERG-2008's
  mixing, like fillwright's `multi`; not GERG-2008 itself). CoolProp with the phase imposed as
  gas, so that no phase search runs;
- the dew temperature of the 9-component gas at 30 bar, Peng-Robinson (CoolProp's PQ flash,
  thermo's FlashVL);
- its cricondentherm (CoolProp: the whole phase envelope, whose highest temperature it is);
- fillwright's whole recompute after an edit and `check` over 1,000 recipes (no peer).

Usage: python3 tools/bench_peers.py [--markdown-only]
Needs: cargo, and pip install CoolProp thermo teqp (the versions measured are printed).
"""
import json
import subprocess
import sys
import time

GAS4 = (["CH4", "N2", "CO2", "C2H6"], [0.85, 0.05, 0.05, 0.05])
GAS9 = (["CH4", "C2H6", "C3H8", "i-C4H10", "n-C4H10", "i-C5H12", "n-C5H12", "N2", "CO2"],
        [0.897, 0.05, 0.015, 0.003, 0.003, 0.001, 0.001, 0.02, 0.01])
T, P, P_DEW = 288.15, 150e5, 30e5
COOLPROP = {"CH4": "Methane", "N2": "Nitrogen", "CO2": "CarbonDioxide", "C2H6": "Ethane", "C3H8": "Propane",
            "i-C4H10": "IsoButane", "n-C4H10": "n-Butane", "i-C5H12": "Isopentane", "n-C5H12": "n-Pentane"}
TEQP = {"CH4": "methane", "N2": "nitrogen", "CO2": "carbondioxide", "C2H6": "ethane", "C3H8": "propane",
        "i-C4H10": "isobutane", "n-C4H10": "n-butane", "i-C5H12": "isopentane", "n-C5H12": "n-pentane"}
THERMO = {"CH4": "methane", "N2": "nitrogen", "CO2": "carbon dioxide", "C2H6": "ethane", "C3H8": "propane",
          "i-C4H10": "isobutane", "n-C4H10": "butane", "i-C5H12": "isopentane", "n-C5H12": "pentane"}


def per_call(f, budget=0.3):
    """Median seconds per call over 5 batches of about budget/5 seconds."""
    f()
    start = time.perf_counter()
    f()
    once = max(time.perf_counter() - start, 1e-7)
    n = max(1, int(budget / 5 / once))
    runs = []
    for _ in range(5):
        t = time.perf_counter()
        for _ in range(n):
            f()
        runs.append((time.perf_counter() - t) / n)
    return sorted(runs)[2]


def ours():
    subprocess.run(["cargo", "build", "--release", "--quiet", "--bins", "--examples"], check=True)
    out = subprocess.run(["target/release/examples/bench_table"], check=True, capture_output=True, text=True)
    return {r["case"]: r["seconds"] for r in map(json.loads, out.stdout.splitlines())}


def coolprop():
    import CoolProp
    import CoolProp.CoolProp as CP
    res = {"version": "CoolProp " + CoolProp.__version__}
    for label, (ids, x) in (("4", GAS4), ("9", GAS9)):
        for backend, key in (("PR", "pr"), ("HEOS", "multi")):
            s = CP.AbstractState(backend, "&".join(COOLPROP[i] for i in ids))
            s.set_mole_fractions(x)
            s.specify_phase(CP.iphase_gas)
            def run(s=s):
                s.update(CP.PT_INPUTS, P, T)
                return s.rhomolar()
            res[f"{key} density {label}"] = per_call(run)
    ids, x = GAS9
    s = CP.AbstractState("PR", "&".join(COOLPROP[i] for i in ids))
    s.set_mole_fractions(x)
    res["dew point 9"] = per_call(lambda: s.update(CP.PQ_INPUTS, P_DEW, 1), budget=1.0)
    def envelope():
        s.build_phase_envelope("")
        return max(s.get_phase_envelope_data().T)
    t = time.perf_counter()
    envelope()
    res["cricondentherm 9"] = time.perf_counter() - t
    return res


def thermo_lib():
    import thermo
    from thermo import ChemicalConstantsPackage, PRMIX, CEOSGas, CEOSLiquid, FlashVL
    res = {"version": "thermo " + thermo.__version__}
    for label, (ids, x) in (("4", GAS4), ("9", GAS9)):
        consts, props = ChemicalConstantsPackage.from_IDs([THERMO[i] for i in ids])
        kw = dict(Tcs=consts.Tcs, Pcs=consts.Pcs, omegas=consts.omegas, zs=x)
        def pr(kw=kw):
            eos = PRMIX(T=T, P=P, **kw)
            return getattr(eos, "V_g", None) or eos.V_l  # one root: the gas-like one
        res[f"pr density {label}"] = per_call(pr)
        if label == "9":
            eos_kwargs = dict(Tcs=consts.Tcs, Pcs=consts.Pcs, omegas=consts.omegas)
            gas = CEOSGas(PRMIX, eos_kwargs, HeatCapacityGases=props.HeatCapacityGases)
            liq = CEOSLiquid(PRMIX, eos_kwargs, HeatCapacityGases=props.HeatCapacityGases)
            flasher = FlashVL(consts, props, liquid=liq, gas=gas)
            res["dew point 9"] = per_call(lambda: flasher.flash(P=P_DEW, VF=1, zs=x).T, budget=1.0)
    return res


def teqp_lib():
    import teqp
    res = {"version": "teqp " + teqp.__version__}
    R = 8.31446261815324
    for label, (ids, x) in (("4", GAS4), ("9", GAS9)):
        import numpy as np
        z = np.array(x)
        gerg = teqp.make_model({"kind": "GERG2008resid", "model": {"names": [TEQP[i] for i in ids]}})
        def density(model=gerg):
            rho = P / (R * T)
            for _ in range(20):
                a01 = model.get_Ar01(T, rho, z)
                a02 = model.get_Ar02n(T, rho, z)[2]
                p = rho * R * T * (1 + a01)
                dp = R * T * (1 + 2 * a01 + a02)
                step = (p - P) / dp
                rho -= step
                if abs(step) < 1e-12 * rho:
                    break
            return rho
        res[f"gerg density {label}"] = per_call(density)
    return res


def main():
    rows = [("pr density 4", "PR density, 4 components"), ("pr density 9", "PR density, 9 components"),
            ("gerg density 4", "GERG-2008 density, 4 components"), ("gerg density 9", "GERG-2008 density, 9 components"),
            ("multi density 4", "multi-fluid density, 4 components"),
            ("multi density 9", "multi-fluid density, 9 components"),
            ("dew point 9", "dew point at 30 bar, 9 components, PR"),
            ("cricondentherm 9", "cricondentherm, 9 components, PR")]
    ours_ = ours()
    # The aga8 crate is timed by bench_table beside fillwright (a peer in Rust).
    peers = [{"version": "aga8 crate 0.6.1", **{k.replace("aga8", "gerg"): v for k, v in ours_.items()
                                                 if k.startswith("aga8 ")}}]
    for f in (coolprop, thermo_lib, teqp_lib):
        try:
            peers.append(f())
        except Exception as e:  # a peer that is not installed is reported, not fatal
            peers.append({"version": f"{f.__name__}: {e}"})

    def fmt(s):
        if s is None:
            return "n/a"
        if s < 1e-3:
            return f"{s * 1e6:.3g} µs"
        if s < 1:
            return f"{s * 1e3:.3g} ms"
        return f"{s:.3g} s"

    print("| case | fillwright | " + " | ".join(p["version"] for p in peers) + " |")
    print("|---|---" + "|---" * len(peers) + "|")
    for key, title in rows:
        print(f"| {title} | {fmt(ours_.get(key))} | " + " | ".join(fmt(p.get(key)) for p in peers) + " |")
    for key in sorted(k for k in ours_ if k.startswith("estimate ")):
        print(f"| {key.replace('estimate ', 'screen estimate, ')} | {fmt(ours_[key])} |" + " |" * len(peers))
    for key in sorted(k for k in ours_ if k.startswith("recompute ")):
        print(f"| {key.replace('recompute ', 'whole recompute, ')} | {fmt(ours_[key])} |" + " |" * len(peers))
    if "check 1000 recipes" in ours_:
        print(f"| check over 1,000 recipes (process, 2 cores) | {fmt(ours_['check 1000 recipes'])} |" + " |" * len(peers))


if __name__ == "__main__":
    sys.exit(main())
