#!/usr/bin/env python3
"""Check the fluid catalogue TOML files and their reference CSV files.

Run from the repository root (standard library only, Python >= 3.11):

    python3 tools/catalogue/check_data.py

Errors (exit status 1): a missing required field, a source key that is not in
the file's [sources] table, an implausible value, a duplicate id or alias,
a malformed id or CAS number, a formula that does not give the stated molar
mass, a malformed ideal-gas cp entry or a malformed reference CSV.

Reported but not errors: fluids whose acentric factor differs by more than 10 %
from the Edmister estimate
    omega_E = (3/7) log10(Pc / 101325 Pa) / (Tc/Tb - 1) - 1
(Edmister, Petroleum Refiner 37 (1958) 173; as given in Poling et al.,
The Properties of Gases and Liquids, 5th ed.), fluids with no vapor-pressure
reference file, and reference files whose pressure at the catalogue's normal
boiling point is more than 2 % away from 101.325 kPa.
"""

from __future__ import annotations

import csv
import math
import re
import sys
import tomllib
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
DATA_DIR = REPO / "crates" / "fluids" / "data"
REF_DIR = DATA_DIR / "reference"
P_ATM = 101325.0

REQUIRED_TEXT = ["id", "name", "chemical_name", "formula", "cas", "caution"]
REQUIRED_VALUES = [
    "molar_mass_kg_per_mol", "critical_temperature_k", "critical_pressure_pa",
    "critical_density_kg_per_m3", "acentric_factor", "normal_boiling_point_k",
    "triple_point_temperature_k",
]
OPTIONAL_VALUES = [
    "triple_point_pressure_pa", "heat_of_fusion_j_per_mol",
    "enthalpy_of_vaporization_at_nbp_j_per_mol", "melting_volume_change_fraction",
]
OPTIONAL_TEXT = ["ashrae_number"]
KNOWN_KEYS = set(REQUIRED_TEXT + REQUIRED_VALUES + OPTIONAL_VALUES + OPTIONAL_TEXT
                 + ["aliases", "safety_class", "ideal_gas_cp"])
SAFETY_CLASSES = {"A1", "A2L", "A2", "A3", "B1", "B2L", "B2", "B3"}

# (low, high) exclusive plausibility bounds
BOUNDS = {
    "molar_mass_kg_per_mol": (0.002, 0.5),
    "critical_temperature_k": (5.0, 1000.0),
    "critical_pressure_pa": (1e5, 3e7),
    "acentric_factor": (-0.5, 1.0),
    "critical_density_kg_per_m3": (10.0, 2000.0),
    "triple_point_pressure_pa": (0.0, 3e7),
    "heat_of_fusion_j_per_mol": (50.0, 1e5),
    "enthalpy_of_vaporization_at_nbp_j_per_mol": (500.0, 1e5),
    "melting_volume_change_fraction": (-0.5, 0.5),
}

# Standard atomic weights (IUPAC), g/mol -- common practice.
ATOMIC_WEIGHTS = {"H": 1.00794, "C": 12.0107, "N": 14.0067, "O": 15.9994, "F": 18.9984032,
                  "S": 32.065, "Cl": 35.453, "Ar": 39.948}


def formula_mass(formula: str) -> float:
    """Molar mass in g/mol of a condensed formula such as CH3(CH2)3CH3 or CF3CF=CH2."""
    tokens = re.findall(r"[A-Z][a-z]?|\d+|[()]|=", formula)
    if "".join(tokens) != formula:
        raise ValueError(f"cannot parse formula {formula!r}")
    stack = [0.0]
    i = 0
    while i < len(tokens):
        tok = tokens[i]
        if tok == "=":
            i += 1
            continue
        if tok == "(":
            stack.append(0.0)
            i += 1
            continue
        if tok == ")":
            group = stack.pop()
            count = 1
            if i + 1 < len(tokens) and tokens[i + 1].isdigit():
                count = int(tokens[i + 1])
                i += 1
            stack[-1] += group * count
            i += 1
            continue
        if tok.isdigit():
            raise ValueError(f"unexpected number in formula {formula!r}")
        if tok not in ATOMIC_WEIGHTS:
            raise ValueError(f"unknown element {tok!r} in formula {formula!r}")
        count = 1
        if i + 1 < len(tokens) and tokens[i + 1].isdigit():
            count = int(tokens[i + 1])
            i += 1
        stack[-1] += ATOMIC_WEIGHTS[tok] * count
        i += 1
    if len(stack) != 1:
        raise ValueError(f"unbalanced parentheses in formula {formula!r}")
    return stack[0]


def cas_ok(cas: str) -> bool:
    """CAS registry number format and check digit."""
    m = re.fullmatch(r"(\d{2,7})-(\d{2})-(\d)", cas)
    if not m:
        return False
    digits = (m.group(1) + m.group(2))[::-1]
    return sum((k + 1) * int(d) for k, d in enumerate(digits)) % 10 == int(m.group(3))


def edmister_omega(tc: float, pc: float, tb: float) -> float:
    return (3.0 / 7.0) * math.log10(pc / P_ATM) / (tc / tb - 1.0) - 1.0


def check_reference_csv(fid: str, fluid: dict, errors: list[str], notes: list[str]) -> None:
    path = REF_DIR / f"{fid}_vapor_pressure.csv"
    if not path.exists():
        notes.append(f"{fid}: no reference vapor-pressure file ({path.name})")
        return
    lines = path.read_text().splitlines()
    header = [l for l in lines if l.startswith("#")]
    body = [l for l in lines if not l.startswith("#")]
    where = f"{fid}: {path.name}"
    if len(header) < 4:
        errors.append(f"{where}: expected '#' header lines naming fluid, correlation, source and range")
    if not body or body[0] != "T_K,P_Pa,hvap_J_per_mol":
        errors.append(f"{where}: first data line must be 'T_K,P_Pa,hvap_J_per_mol'")
        return
    rows = list(csv.DictReader(body))
    if not 10 <= len(rows) <= 20:
        errors.append(f"{where}: {len(rows)} rows, expected 10 to 20")
    tt = fluid["triple_point_temperature_k"]["value"]
    tc = fluid["critical_temperature_k"]["value"]
    temps, press = [], []
    for r in rows:
        try:
            t, p = float(r["T_K"]), float(r["P_Pa"])
            h = float(r["hvap_J_per_mol"]) if r["hvap_J_per_mol"] else None
        except (TypeError, ValueError):
            errors.append(f"{where}: bad row {r}")
            return
        if not (tt - 1e-6 <= t <= 0.95 * tc + 1e-6):
            errors.append(f"{where}: T = {t} K outside [triple point {tt}, 0.95 Tc {0.95 * tc:.3f}]")
        if not p > 0:
            errors.append(f"{where}: P = {p} Pa not positive")
        if h is not None and not h > 0:
            errors.append(f"{where}: hvap = {h} J/mol not positive")
        temps.append(t)
        press.append(p)
    if any(b <= a for a, b in zip(temps, temps[1:])) or any(b <= a for a, b in zip(press, press[1:])):
        errors.append(f"{where}: T and P must both increase row by row")
    # Consistency with the catalogue's normal boiling point (informational).
    tb = fluid.get("normal_boiling_point_k", {}).get("value")
    if tb is not None and temps[0] <= tb <= temps[-1]:
        k = next(i for i in range(1, len(temps)) if temps[i] >= tb)
        t0, t1, p0, p1 = temps[k - 1], temps[k], press[k - 1], press[k]
        # interpolate ln P linearly in 1/T
        frac = (1 / tb - 1 / t0) / (1 / t1 - 1 / t0)
        p_tb = math.exp(math.log(p0) + frac * (math.log(p1) - math.log(p0)))
        if abs(p_tb / P_ATM - 1) > 0.02:
            notes.append(f"{fid}: reference correlation gives {p_tb:.0f} Pa at the catalogue NBP {tb} K "
                         f"({100 * (p_tb / P_ATM - 1):+.1f} % from 101325 Pa)")


def main() -> int:
    errors: list[str] = []
    notes: list[str] = []
    outliers: list[str] = []
    ids: dict[str, str] = {}
    names: dict[str, str] = {}
    n_fluids = 0
    # The fluid files: the data directory also holds blends.toml and the generated fits and
    # accuracy files, which have no [[fluid]] tables.
    files = []
    for path in sorted(DATA_DIR.glob("*.toml")):
        with path.open("rb") as fh:
            if "fluid" in tomllib.load(fh):
                files.append(path)
    if not files:
        print(f"no TOML files in {DATA_DIR}")
        return 1

    for path in files:
        with path.open("rb") as fh:
            doc = tomllib.load(fh)
        sources = doc.get("sources", {})
        if not sources:
            errors.append(f"{path.name}: no [sources] table")
        for key, text in sources.items():
            if not isinstance(text, str) or not text.strip():
                errors.append(f"{path.name}: source {key} has no citation text")
        used_sources = set()
        for fl in doc.get("fluid", []):
            n_fluids += 1
            fid = fl.get("id", "?")
            where = f"{path.name}: {fid}"

            def src(entry_name: str, entry: dict) -> None:
                key = entry.get("source")
                if key not in sources:
                    errors.append(f"{where}: {entry_name}.source {key!r} not in [sources]")
                used_sources.add(key)

            for key in fl:
                if key not in KNOWN_KEYS:
                    errors.append(f"{where}: unknown field {key}")
            for key in REQUIRED_TEXT:
                if not isinstance(fl.get(key), str) or not fl[key].strip():
                    errors.append(f"{where}: missing text field {key}")
            if not re.fullmatch(r"[a-z0-9]+", fid):
                errors.append(f"{where}: id must be lowercase letters/digits")
            if fid in ids:
                errors.append(f"{where}: duplicate id (also in {ids[fid]})")
            ids[fid] = path.name
            if not isinstance(fl.get("aliases"), list) or not all(isinstance(a, str) for a in fl["aliases"]):
                errors.append(f"{where}: aliases must be a list of strings")
            for label in [fl.get("name", ""), fl.get("ashrae_number", ""), *fl.get("aliases", [])]:
                # Compare case-insensitively and ignoring spaces, hyphens and commas, as a
                # lookup by name would.
                norm = re.sub(r"[\s,-]", "", label).lower()
                if not norm:
                    continue
                if norm in names and names[norm] != fid:
                    errors.append(f"{where}: name/alias {label!r} also used by {names[norm]}")
                names[norm] = fid
            if "cas" in fl and not cas_ok(fl["cas"]):
                errors.append(f"{where}: CAS number {fl['cas']} malformed or bad check digit")
            if "safety_class" in fl:
                sc = fl["safety_class"]
                if sc.get("value") not in SAFETY_CLASSES:
                    errors.append(f"{where}: safety_class {sc.get('value')!r} not one of {sorted(SAFETY_CLASSES)}")
                src("safety_class", sc)
                if "ashrae_number" not in fl:
                    errors.append(f"{where}: safety_class without ashrae_number")

            vals: dict[str, float] = {}
            pt_entry = fl.get("triple_point_pressure_pa")
            no_nbp_ok = pt_entry is not None and pt_entry.get("value", 0) > P_ATM
            for key in REQUIRED_VALUES + OPTIONAL_VALUES:
                entry = fl.get(key)
                if entry is None:
                    if key in REQUIRED_VALUES and not (key == "normal_boiling_point_k" and no_nbp_ok):
                        errors.append(f"{where}: missing required {key}")
                    continue
                if not isinstance(entry, dict) or not isinstance(entry.get("value"), (int, float)):
                    errors.append(f"{where}: {key} must be {{ value = <number>, source = <key> }}")
                    continue
                src(key, entry)
                vals[key] = float(entry["value"])
                lo_hi = BOUNDS.get(key)
                if lo_hi and not lo_hi[0] < vals[key] < lo_hi[1]:
                    errors.append(f"{where}: {key} = {vals[key]} outside ({lo_hi[0]}, {lo_hi[1]})")

            tc = vals.get("critical_temperature_k")
            pc = vals.get("critical_pressure_pa")
            tb = vals.get("normal_boiling_point_k")
            tt = vals.get("triple_point_temperature_k")
            mm = vals.get("molar_mass_kg_per_mol")
            omega = vals.get("acentric_factor")
            rhoc = vals.get("critical_density_kg_per_m3")
            if tc is not None and tt is not None:
                if tb is not None and not tt < tb < tc:
                    errors.append(f"{where}: need triple T {tt} < NBP {tb} < Tc {tc}")
                if tb is None and not tt < tc:
                    errors.append(f"{where}: need triple T {tt} < Tc {tc}")
            if "triple_point_pressure_pa" in vals and pc is not None and not vals["triple_point_pressure_pa"] < pc:
                errors.append(f"{where}: triple-point pressure not below Pc")
            if tb is None and no_nbp_ok:
                notes.append(f"{fid}: no normal boiling point (triple-point pressure "
                             f"{pt_entry['value']:.4g} Pa > 1 atm); Edmister check skipped")
            if mm is not None and "formula" in fl:
                try:
                    fm = formula_mass(fl["formula"]) / 1000.0
                    if abs(fm / mm - 1) > 1e-4:
                        errors.append(f"{where}: formula {fl['formula']} gives M = {fm:.6f} kg/mol, "
                                      f"catalogue says {mm}")
                except ValueError as exc:
                    errors.append(f"{where}: {exc}")
            if None not in (mm, tc, pc, rhoc):
                zc = pc * mm / (rhoc * 8.31446261815324 * tc)
                if not 0.2 < zc < 0.35:
                    errors.append(f"{where}: critical compressibility Zc = {zc:.3f} outside (0.2, 0.35)")
            if None not in (tc, pc, tb, omega):
                om_e = edmister_omega(tc, pc, tb)
                if abs(om_e - omega) > 0.10 * abs(omega):
                    outliers.append(f"{fid}: omega = {omega}, Edmister = {om_e:.4f} "
                                    f"(diff {om_e - omega:+.4f}, {100 * (om_e - omega) / omega:+.0f} %)"
                                    if omega else f"{fid}: omega = 0, Edmister = {om_e:.4f}")

            cp = fl.get("ideal_gas_cp")
            if cp is None:
                errors.append(f"{where}: missing required ideal_gas_cp")
            else:
                src("ideal_gas_cp", cp)
                coefs = cp.get("coefficients")
                if cp.get("form") != "cp_over_r_polynomial":
                    errors.append(f"{where}: ideal_gas_cp.form must be 'cp_over_r_polynomial'")
                if not (isinstance(coefs, list) and len(coefs) == 5
                        and all(isinstance(c, (int, float)) for c in coefs)):
                    errors.append(f"{where}: ideal_gas_cp.coefficients must be 5 numbers")
                else:
                    t0, t1 = cp.get("t_min_k"), cp.get("t_max_k")
                    if not (isinstance(t0, (int, float)) and isinstance(t1, (int, float)) and 0 < t0 < t1):
                        errors.append(f"{where}: ideal_gas_cp needs 0 < t_min_k < t_max_k")
                    else:
                        for k in range(21):
                            t = t0 + (t1 - t0) * k / 20
                            v = sum(c * t**n for n, c in enumerate(coefs))
                            if not 2.4 < v < 100:
                                errors.append(f"{where}: ideal_gas_cp cp/R = {v:.3f} at {t:.1f} K implausible")
                                break

            check_reference_csv(fid, fl, errors, notes)

        for key in sources:
            if key not in used_sources:
                notes.append(f"{path.name}: source {key} is not used")

    print(f"checked {n_fluids} fluids in {len(files)} files ({', '.join(p.name for p in files)})")
    print(f"Edmister acentric-factor check (|omega_E - omega| <= 10 % of omega): "
          f"{n_fluids - len(outliers)} within, {len(outliers)} outside")
    for line in outliers:
        print(f"  outlier  {line}")
    for line in notes:
        print(f"  note     {line}")
    for line in errors:
        print(f"  ERROR    {line}")
    print(f"{len(errors)} errors")
    return 1 if errors else 0


if __name__ == "__main__":
    sys.exit(main())
