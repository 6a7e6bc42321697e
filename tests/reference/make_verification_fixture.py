"""Calibration fits of ISO 6143 verifications, computed independently with scipy.odr
(weighted orthogonal distance regression, ODRPACK) and, for straight lines, with York's
closed-form solution (York, Evensen, Martinez Lopez and Delgado, "Unified equations for
the slope, intercept, and standard errors of the best straight line", Am. J. Phys. 72,
367-375 (2004), section III), for tests/verification.rs.

The data sets are ours (invented analyser readings of invented reference mixtures).
Writes the verification files to tests/verifications/*.ron and the expected figures to
tests/fixtures/verification_reference.json.

    pip install scipy==1.17.1 numpy
    python3 tests/reference/make_verification_fixture.py
"""
import json
import math
import os

import numpy as np
from scipy import odr

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))

# name: (gas, function, [(content %, u %, response, u response)], sample (prepared %, u %, response, u))
CASES = {
    "co2-ndir-linear": ("CO2", "linear", [
        (8.0021, 0.0040, 0.79894, 0.00030),
        (9.9870, 0.0040, 0.99810, 0.00030),
        (11.9950, 0.0045, 1.19902, 0.00030),
        (13.9920, 0.0050, 1.39741, 0.00035),
        (16.0080, 0.0055, 1.59930, 0.00035),
    ], (12.0036, 0.0006, 1.20174, 0.00030)),
    "co-ppm-quadratic": ("CO", "quadratic", [
        (50.12e-4, 0.05e-4, 251.3, 0.4),
        (200.4e-4, 0.12e-4, 1003.9, 0.9),
        (401.1e-4, 0.20e-4, 1996.0, 1.5),
        (600.3e-4, 0.28e-4, 2972.8, 2.0),
        (799.6e-4, 0.36e-4, 3938.5, 2.6),
        (1001.8e-4, 0.45e-4, 4903.7, 3.2),
    ], (500.0e-4, 0.15e-4, 2487.1, 1.8)),
    "o2-paramagnetic-linear-wide-x": ("O2", "linear", [
        (0.501, 0.006, 0.4988, 0.0004),
        (1.003, 0.008, 1.0041, 0.0004),
        (2.012, 0.010, 2.0098, 0.0005),
        (4.990, 0.015, 4.9943, 0.0008),
    ], (3.0, 0.01, 3.0021, 0.0005)),
    "ch4-fid-cubic": ("CH4", "cubic", [
        (1.001, 0.001, 10.012, 0.004),
        (2.004, 0.001, 19.948, 0.006),
        (3.998, 0.002, 39.217, 0.010),
        (6.012, 0.003, 57.803, 0.014),
        (8.003, 0.004, 75.336, 0.018),
        (9.995, 0.004, 92.210, 0.022),
        (12.010, 0.005, 108.642, 0.026),
    ], (5.0, 0.002, 48.63, 0.012)),
}

DEGREE = {"linear": 1, "quadratic": 2, "cubic": 3}


def poly(beta, x):
    return sum(b * x ** k for k, b in enumerate(beta))


def fit_odr(points, degree):
    x = np.array([p[0] for p in points]) / 100.0
    ux = np.array([p[1] for p in points]) / 100.0
    y = np.array([p[2] for p in points])
    uy = np.array([p[3] for p in points])
    start = np.polynomial.polynomial.polyfit(x, y, degree, w=1.0 / uy)
    # Analytic derivatives (deriv=3): finite differences would limit the estimates to
    # about 1e-5 relative.
    model = odr.Model(poly, fjacb=lambda beta, x: np.array([x ** k for k in range(len(beta))]),
                      fjacd=lambda beta, x: sum(k * b * x ** (k - 1) for k, b in enumerate(beta) if k > 0))
    data = odr.RealData(x, y, sx=ux, sy=uy)
    job = odr.ODR(data, model, beta0=start, maxit=1000, sstol=1e-15, partol=1e-15)
    job.set_job(deriv=3)
    out = job.run()
    # cov_beta is ODRPACK's unscaled covariance; sd_beta = sqrt(diag(cov_beta) * res_var).
    adjusted = x + out.delta
    return out.beta, out.cov_beta, adjusted, out.sum_square


def york(points):
    X = np.array([p[0] for p in points]) / 100.0
    Y = np.array([p[2] for p in points])
    wX = 1.0 / (np.array([p[1] for p in points]) / 100.0) ** 2
    wY = 1.0 / np.array([p[3] for p in points]) ** 2
    b = np.polyfit(X, Y, 1)[0]
    for _ in range(1000):
        W = wX * wY / (wX + b * b * wY)
        Xbar, Ybar = np.sum(W * X) / np.sum(W), np.sum(W * Y) / np.sum(W)
        U, V = X - Xbar, Y - Ybar
        beta = W * (U / wY + b * V / wX)
        b_new = np.sum(W * beta * V) / np.sum(W * beta * U)
        if abs(b_new - b) <= 1e-15 * abs(b):
            b = b_new
            break
        b = b_new
    W = wX * wY / (wX + b * b * wY)
    Xbar, Ybar = np.sum(W * X) / np.sum(W), np.sum(W * Y) / np.sum(W)
    U, V = X - Xbar, Y - Ybar
    beta = W * (U / wY + b * V / wX)
    a = Ybar - b * Xbar
    x_adj = Xbar + beta
    xbar = np.sum(W * x_adj) / np.sum(W)
    u = x_adj - xbar
    sb = math.sqrt(1.0 / np.sum(W * u * u))
    sa = math.sqrt(1.0 / np.sum(W) + xbar * xbar * sb * sb)
    return a, b, sa, sb


def analyse(beta, cov, y, uy, low, high):
    roots = np.polynomial.polynomial.polyroots(np.concatenate(([beta[0] - y], beta[1:])))
    inside = [r.real for r in roots if abs(r.imag) < 1e-12 and low <= r.real <= high]
    x = inside[0]
    slope = sum(k * b * x ** (k - 1) for k, b in enumerate(beta) if k > 0)
    g = np.array([x ** k for k in range(len(beta))])
    return x, math.sqrt(uy ** 2 + g @ cov @ g) / abs(slope)


def ron(name, gas, function, points, sample):
    lines = ["Verification(", "    format: 1,", f'    gas: "{gas}",',
             f'    analyser: "bench analyser ({name}, invented data)",', f'    function: "{function}",',
             "    standards: ["]
    for k, (x, ux, y, uy) in enumerate(points):
        lines.append(f'        (name: "RM-{k + 1}", content: "{x!r}%±{ux!r}%", response: "{y!r}±{uy!r}"),')
    lines.append("    ],")
    x, ux, y, uy = sample
    lines.append(f'    sample: (prepared: "{x!r}%±{ux!r}%", response: "{y!r}±{uy!r}"),')
    lines.append(")")
    return "\n".join(lines) + "\n"


def main():
    out_dir = os.path.join(ROOT, "tests", "verifications")
    os.makedirs(out_dir, exist_ok=True)
    cases = []
    for name, (gas, function, points, sample) in CASES.items():
        with open(os.path.join(out_dir, name + ".ron"), "w") as f:
            f.write(ron(name, gas, function, points, sample))
        beta, cov, adjusted, s = fit_odr(points, DEGREE[function])
        low, high = min(p[0] for p in points) / 100.0, max(p[0] for p in points) / 100.0
        x, ux = analyse(beta, cov, sample[2], sample[3], low, high)
        case = {
            "file": f"tests/verifications/{name}.ron",
            "function": function,
            "coefficients": list(beta),
            "covariance": [list(row) for row in cov],
            "adjusted": list(adjusted),
            "sum_of_squares": s,
            "analysed": x,
            "analysed_u": ux,
        }
        if function == "linear":
            a, b, sa, sb = york(points)
            case["york"] = {"intercept": a, "slope": b, "u_intercept": sa, "u_slope": sb}
        cases.append(case)
    with open(os.path.join(ROOT, "tests", "fixtures", "verification_reference.json"), "w") as f:
        json.dump({"source": "scipy.odr (ODRPACK) and York et al. 2004; tests/reference/make_verification_fixture.py",
                   "cases": cases}, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
