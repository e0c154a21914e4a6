#!/usr/bin/env python3
"""Fit cp/R of the ideal gas to NIST Chemistry WebBook SRD 69 ideal-gas tables.

For water, propane, isobutane and nitrogen, crates/fluids/data/reference/
holds cp (J/g/K) along a 1 Pa isobar, i.e. in the ideal-gas state
(NIST Chemistry WebBook SRD 69, tab-delimited export; see each file's '#'
header). This script fits

    cp/R = a0 + a1 T + a2 T^2 + a3 T^3 + a4 T^4        (T in K)

to each table by linear least squares, over the table's own temperature
range, and compares the fit with the Poling et al. (2001) Appendix A
polynomial for the same fluid over that range.

Run from the repository root:

    pip install chemicals==1.5.2 numpy
    python3 tools/catalogue/fit_ideal_gas_cp.py

It prints, for every fluid, the coefficients, the fit's maximum deviation
from the table and the Poling polynomial's maximum deviation from the same
table. build_catalogue.py imports fit_all() from this file.
"""

from __future__ import annotations

import csv
import re
from pathlib import Path

import numpy as np

# CODATA 2018 molar gas constant (exact: N_A k), J/(mol K).
R = 8.31446261815324

REPO = Path(__file__).resolve().parents[2]
REFERENCE_DIR = REPO / "crates" / "fluids" / "data" / "reference"

# fluid id -> (table file, CAS number used to look up the Poling polynomial)
TABLES = {
    "water": ("water_ideal_gas.csv", "7732-18-5"),
    "propane": ("propane_ideal_gas.csv", "74-98-6"),
    "isobutane": ("isobutane_ideal_gas.csv", "75-28-5"),
    "nitrogen": ("nitrogen_ideal_gas.csv", "7727-37-9"),
}


def read_table(path: Path) -> tuple[float, np.ndarray, np.ndarray]:
    """Return (molar mass kg/mol from the header, T in K, cp in J/(g K))."""
    molar_mass = None
    lines = path.read_text().splitlines()
    for line in lines:
        if line.startswith("#"):
            match = re.search(r"expected M = ([0-9.]+)", line)
            if match:
                molar_mass = float(match.group(1))
    if molar_mass is None:
        raise ValueError(f"{path.name}: no 'expected M = ...' in the header")
    rows = list(csv.DictReader(line for line in lines if not line.startswith("#")))
    temps = np.array([float(r["T_K"]) for r in rows])
    cps = np.array([float(r["cp_J_gK"]) for r in rows])
    return molar_mass, temps, cps


def fit_one(fluid: str) -> dict:
    """Fit one table; return coefficients, range and deviations."""
    filename, cas = TABLES[fluid]
    molar_mass, temps, cps = read_table(REFERENCE_DIR / filename)
    # J/(g K) -> J/(mol K) -> dimensionless cp/R
    cp_over_r = cps * 1000.0 * molar_mass / R
    # Fit on a scaled variable for conditioning, then convert to plain
    # power-series coefficients in T.
    poly = np.polynomial.Polynomial.fit(temps, cp_over_r, deg=4)
    coefficients = [float(c) for c in poly.convert().coef]
    while len(coefficients) < 5:
        coefficients.append(0.0)
    fitted = sum(c * temps**k for k, c in enumerate(coefficients))
    fit_rel = np.abs(fitted / cp_over_r - 1.0)

    result = {
        "fluid": fluid,
        "file": filename,
        "molar_mass_kg_per_mol": molar_mass,
        "coefficients": coefficients,
        "t_min_k": float(temps.min()),
        "t_max_k": float(temps.max()),
        "points": int(len(temps)),
        "fit_max_rel_dev": float(fit_rel.max()),
        "fit_max_abs_dev_cp_over_r": float(np.abs(fitted - cp_over_r).max()),
        "poling": None,
    }

    try:
        from chemicals import heat_capacity

        table = heat_capacity.Cp_data_Poling
        if cas in table.index and not np.isnan(table.loc[cas, "a1"]):
            row = table.loc[cas]
            poling_coefs = [float(row[f"a{k}"]) for k in range(5)]
            poling = sum(c * temps**k for k, c in enumerate(poling_coefs))
            result["poling"] = {
                "coefficients": poling_coefs,
                "t_min_k": float(row["Tmin"]),
                "t_max_k": float(row["Tmax"]),
                "max_rel_dev": float(np.abs(poling / cp_over_r - 1.0).max()),
            }
    except ImportError:
        pass
    return result


def fit_all() -> dict[str, dict]:
    """Fit all four tables."""
    return {fluid: fit_one(fluid) for fluid in TABLES}


def main() -> None:
    for fluid, res in fit_all().items():
        print(f"{fluid}: {res['file']}, {res['points']} points, "
              f"{res['t_min_k']:g}-{res['t_max_k']:g} K, M = {res['molar_mass_kg_per_mol']} kg/mol")
        print("  cp/R coefficients a0..a4 = [" + ", ".join(repr(c) for c in res["coefficients"]) + "]")
        print(f"  fit max deviation from table: {100 * res['fit_max_rel_dev']:.4f} % "
              f"({res['fit_max_abs_dev_cp_over_r']:.2e} in cp/R)")
        if res["poling"]:
            p = res["poling"]
            better = "fit" if res["fit_max_rel_dev"] < p["max_rel_dev"] else "Poling"
            print(f"  Poling 2001 App. A polynomial ({p['t_min_k']:g}-{p['t_max_k']:g} K) "
                  f"max deviation from table: {100 * p['max_rel_dev']:.4f} % -> better over table range: {better}")
        else:
            print("  no Poling 2001 App. A polynomial available for comparison")


if __name__ == "__main__":
    main()
