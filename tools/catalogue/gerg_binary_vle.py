#!/usr/bin/env python3
"""Binary bubble-point check data from the GERG-2008 equation of state.

How to run (from the repository root):

    pip install teqp==0.23.2 numpy
    python3 tools/catalogue/gerg_binary_vle.py

This writes crates/fluids/data/reference/propane_isobutane_gerg2008.csv (the
catalogue fits its binary interaction parameters to it; the engine tests keep a copy
in crates/eos/tests/data/): for
T = 240 ... 340 K and liquid propane mole fractions x = 0 (pure isobutane),
0.1, 0.25, 0.5, 0.75, 0.9 and 1 (pure propane), the bubble pressure and the
propane mole fraction y of the incipient vapor.

Model: GERG-2008, O. Kunz and W. Wagner, J. Chem. Eng. Data 57 (2012)
3032-3091 (also ISO 20765-2), as implemented in the teqp library (Bell,
Deiters and Leal, Ind. Eng. Chem. Res. 61 (2022)), model kind
"GERG2008resid". Phase equilibrium needs only the residual Helmholtz energy:
at equal temperature the ideal-gas part of each chemical potential differs
between phases only by RT ln(rho_i), which the fugacity check below includes.

First the model must reproduce the published GERG-2008 worked example
(AGA Report No. 8 Part 2 reference code, see check_reference_example).

Method, per isotherm:
  1. each pure fluid's saturation densities, marched down from its critical
     point in 0.5 K steps (linear predictor, teqp pure_VLE_T corrector);
  2. the binary isotherm traced from the pure butane towards pure propane
     (teqp trace_VLE_isotherm_binary);
  3. at each wanted x the trace is interpolated linearly for a start value
     and solved exactly with teqp mix_VLE_Tx;
  4. every point (pure ones too) is checked: fugacity f_i = rho_i R T
     exp(mu_i^r / RT) equal in liquid and vapor to 1e-8 relative, and the
     liquid and vapor pressures equal to 1e-8 relative.

It then prints the pure endpoints against the NIST Chemistry WebBook
saturation tables in crates/eos/tests/data/{propane,isobutane}_saturation.csv
(interpolated in ln P against 1/T).

`--second n-butane` computes propane / n-butane instead, written to
crates/fluids/data/reference/propane_butane_gerg2008.csv (no WebBook table for
n-butane is in the repository, so the endpoint comparison is skipped for it).
"""

from __future__ import annotations

import argparse
import csv
import math
from pathlib import Path

import numpy as np
import teqp

TEQP_VERSION = "0.23.2"  # pinned: pip install teqp==0.23.2
if teqp.__version__ != TEQP_VERSION:
    raise SystemExit(f"need teqp=={TEQP_VERSION}, found {teqp.__version__}")

REPO = Path(__file__).resolve().parents[2]
DATA = REPO / "crates" / "eos" / "tests" / "data"
OUT = REPO / "crates" / "fluids" / "data" / "reference"
TEMPS_K = [240.0, 260.0, 280.0, 300.0, 320.0, 340.0]
X_PROPANE = [0.1, 0.25, 0.5, 0.75, 0.9]
CHECK_RTOL = 1e-8
CITATION = (
    "O. Kunz and W. Wagner, 'The GERG-2008 wide-range equation of state for natural gases and "
    "other mixtures: an expansion of GERG-2004', J. Chem. Eng. Data 57 (2012) 3032-3091; "
    "also ISO 20765-2"
)


def gerg(names: list[str]):
    """GERG-2008 residual Helmholtz model for the named components."""
    return teqp.make_model({"kind": "GERG2008resid", "model": {"names": names}})


def pressure(model, T: float, rhovec: np.ndarray) -> float:
    """p = rho R T + residual pressure, in Pa."""
    R = model.get_R(rhovec / rhovec.sum())
    return rhovec.sum() * R * T + model.get_pr(T, rhovec)


def worst_mismatch(model, T: float, rhoL: np.ndarray, rhoV: np.ndarray) -> float:
    """Largest relative liquid/vapor mismatch of pressure and of each present fugacity."""
    R = model.get_R(rhoL / rhoL.sum())
    present = (rhoL > 0) & (rhoV > 0)

    def ln_f(rho):
        mu_r = model.build_Psir_gradient_autodiff(T, rho)
        return np.log(rho[present] * R * T) + mu_r[present] / (R * T)

    dev_f = np.abs(np.expm1(ln_f(rhoL) - ln_f(rhoV)))
    pL, pV = pressure(model, T, rhoL), pressure(model, T, rhoV)
    return max(float(dev_f.max()), abs(pL / pV - 1.0))


def check_reference_example() -> None:
    """Reproduce the published GERG-2008 worked example before trusting the model.

    Source: reference code for AGA Report No. 8 Part 2 (= GERG-2008), example
    in github.com/usnistgov/AGA8, AGA8CODE/RUST/tests/gerg-tests.rs: the
    21-component gas below at T = 400 K and D = 12.79828626082062 mol/l has
    P = 50000 kPa and Z = 1.174690666383717.
    """
    names = ["methane", "nitrogen", "carbondioxide", "ethane", "propane", "isobutane",
             "n-butane", "isopentane", "n-pentane", "n-hexane", "n-heptane", "n-octane",
             "n-nonane", "n-decane", "hydrogen", "oxygen", "carbonmonoxide", "water",
             "hydrogensulfide", "helium", "argon"]
    x = np.array([0.77824, 0.02, 0.06, 0.08, 0.03, 0.0015, 0.003, 0.0005, 0.00165, 0.00215,
                  0.00088, 0.00024, 0.00015, 0.00009, 0.004, 0.005, 0.002, 0.0001, 0.0025,
                  0.007, 0.001])
    p = pressure(gerg(names), 400.0, 12.79828626082062e3 * x)
    if abs(p / 50.0e6 - 1.0) > 1e-12:
        raise SystemExit(f"GERG-2008 worked example: P = {p} Pa, published 50000 kPa")
    print(f"GERG-2008 worked example (400 K, 12.798 mol/l): P = {p:.9e} Pa, published 5e7 Pa")


def pure_saturation(name: str, temps: list[float]) -> dict[float, tuple[float, float]]:
    """Saturated liquid and vapor molar densities (mol/m3) of a pure fluid at each T."""
    m = gerg([name])
    Tc, rhoc = m.solve_pure_critical(m.get_Tcvec()[0], 1.0 / m.get_vcvec()[0])
    T = Tc - 1.0
    cur = m.pure_VLE_T(T, *m.extrapolate_from_critical(Tc, rhoc, T), 100)
    prev, step, out = None, 0.5, {}
    for target in sorted(temps, reverse=True):
        while T > target:
            Tn = max(target, T - step)
            guess = cur if prev is None else cur + (cur - prev) * (T - Tn) / step
            prev, cur, T = cur, m.pure_VLE_T(Tn, guess[0], guess[1], 100), Tn
        rhoL, rhoV = float(cur[0]), float(cur[1])
        if not rhoL > 1.5 * rhoV:
            raise RuntimeError(f"{name} at {T} K: saturation collapsed to one phase")
        out[target] = (rhoL, rhoV)
    return out


def isotherm(mix, T: float, light_sat, heavy_sat) -> list[tuple[float, float, float, float]]:
    """Rows (T, x, p, y) along one isotherm, with every point checked."""
    rows = []
    # pure heavy component (x = 0) and pure propane (x = 1), checked with the binary model
    for x, (rL, rV) in ((0.0, heavy_sat), (1.0, light_sat)):
        z = np.array([x, 1.0 - x])
        rhoL, rhoV = rL * z, rV * z
        dev = worst_mismatch(mix, T, rhoL, rhoV)
        if dev > CHECK_RTOL:
            raise RuntimeError(f"pure point T={T} x={x}: mismatch {dev:.1e}")
        rows.append((T, x, pressure(mix, T, rhoL), x, dev))

    trace = mix.trace_VLE_isotherm_binary(
        T, np.array([0.0, heavy_sat[0]]), np.array([0.0, heavy_sat[1]]), teqp.TVLEOptions()
    )
    xs = np.array([pt["xL_0 / mole frac."] for pt in trace])
    rL_tr = np.array([pt["rhoL / mol/m^3"] for pt in trace])
    rV_tr = np.array([pt["rhoV / mol/m^3"] for pt in trace])
    if not (np.all(np.diff(xs) > 0) and xs[-1] > max(X_PROPANE)):
        raise RuntimeError(f"isotherm {T} K: trace not monotonic or stopped at x={xs[-1]:.4f}")
    for x in X_PROPANE:
        guessL = np.array([np.interp(x, xs, rL_tr[:, i]) for i in range(2)])
        guessV = np.array([np.interp(x, xs, rV_tr[:, i]) for i in range(2)])
        code, rhoL, rhoV = mix.mix_VLE_Tx(
            T, guessL, guessV, np.array([x, 1.0 - x]), 1e-10, 1e-12, 1e-12, 1e-12, 50
        )
        xL = rhoL[0] / rhoL.sum()
        dev = worst_mismatch(mix, T, rhoL, rhoV)
        if abs(xL - x) > 1e-12 or dev > CHECK_RTOL:
            raise RuntimeError(f"T={T} x={x}: solver {code}, x={xL}, mismatch {dev:.1e}")
        rows.append((T, x, pressure(mix, T, rhoL), rhoV[0] / rhoV.sum(), dev))
    return sorted(rows, key=lambda r: r[1])


def webbook_psat(path: Path, T: float) -> float:
    """Saturation pressure (Pa) from a WebBook table, linear in ln P against 1/T."""
    with path.open() as fh:
        table = [(float(r["T_K"]), float(r["P_MPa"]) * 1e6)
                 for r in csv.DictReader(line for line in fh if not line.startswith("#"))]
    for (T0, p0), (T1, p1) in zip(table, table[1:]):
        if T0 <= T <= T1:
            w = (1.0 / T - 1.0 / T0) / (1.0 / T1 - 1.0 / T0)
            return math.exp(math.log(p0) + w * (math.log(p1) - math.log(p0)))
    raise ValueError(f"T = {T} K outside {path.name}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--second", default="isobutane", choices=["isobutane", "n-butane"])
    ap.add_argument("--out", type=Path, default=None)
    args = ap.parse_args()
    heavy = args.second
    catalogue_id = heavy.replace("n-", "")
    out = args.out or OUT / f"propane_{catalogue_id}_gerg2008.csv"

    check_reference_example()
    mix = gerg(["propane", heavy])
    light_sat = pure_saturation("propane", TEMPS_K)
    heavy_sat = pure_saturation(heavy, TEMPS_K)
    rows = [r for T in TEMPS_K for r in isotherm(mix, T, light_sat[T], heavy_sat[T])]

    header = [
        f"# propane / {heavy} bubble points: liquid propane mole fraction x -> bubble pressure and",
        "# incipient-vapor propane mole fraction y. x = 0 and x = 1 rows are the pure saturation pressures.",
        f"# model: GERG-2008 equation of state, {CITATION}",
        f"# evaluated with the teqp Python library {TEQP_VERSION} (PyPI), model kind GERG2008resid",
        "# (Bell, Deiters, Leal, Ind. Eng. Chem. Res. 61 (2022)); every point has equal liquid/vapor",
        f"# fugacities of both components and equal pressures to within {CHECK_RTOL:g} relative",
        "# regenerate: python3 tools/catalogue/gerg_binary_vle.py"
        + ("" if heavy == "isobutane" else f" --second {heavy}"),
        "# units: T_K kelvin, x and y mole fractions of propane, p_bubble_Pa pascal",
    ]
    with out.open("w") as fh:
        fh.write("\n".join(header) + "\n")
        fh.write("T_K,x_propane,p_bubble_Pa,y_propane\n")
        for T, x, p, y, _ in rows:
            fh.write(f"{T:g},{x:g},{p:.7e},{y:.8f}\n")

    print(f"wrote {out}")
    print(f"{'T_K':>6} {'x':>5} {'p_bubble_Pa':>14} {'y':>11} {'worst mismatch':>15}")
    for T, x, p, y, dev in rows:
        print(f"{T:6g} {x:5g} {p:14.6e} {y:11.8f} {dev:15.1e}")
    print(f"all {len(rows)} points: fugacities and pressures agree within {CHECK_RTOL:g} relative")

    if heavy == "isobutane":
        print("\npure endpoints vs NIST Chemistry WebBook tables (ln P vs 1/T interpolation)")
        print(f"{'fluid':>10} {'T_K':>6} {'GERG-2008 Pa':>14} {'WebBook Pa':>14} {'rel dev':>10}")
        for fluid, x in (("propane", 1.0), ("isobutane", 0.0)):
            for T, xr, p, _, _ in rows:
                if xr == x:
                    ref = webbook_psat(DATA / f"{fluid}_saturation.csv", T)
                    print(f"{fluid:>10} {T:6g} {p:14.6e} {ref:14.6e} {p / ref - 1:+10.2e}")


if __name__ == "__main__":
    main()
