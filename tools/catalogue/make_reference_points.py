#!/usr/bin/env python3
"""Write vapor-pressure / enthalpy-of-vaporization check points for every fluid.

How to run (from the repository root):

    pip install chemicals==1.5.2 numpy
    python3 tools/catalogue/make_reference_points.py

For every fluid in crates/fluids/data/*.toml this writes
crates/fluids/data/reference/<id>_vapor_pressure.csv with columns
T_K,P_Pa,hvap_J_per_mol, evaluated from the best published correlation that
the chemicals library (version 1.5.2) tabulates for the fluid:

  vapor pressure, in order of preference
    1. VDI Heat Atlas PPDS Wagner (2.5, 5) coefficients
    2. Poling et al. (2001) Appendix A Wagner (2.5, 5) coefficients
    3. McGarry (1983) Wagner (3, 6) coefficients
    4. Perry's Handbook 8th ed. Table 2-8 (DIPPR equation 101)
    5. Poling et al. (2001) TRC extended Antoine coefficients
    6. Poling et al. (2001) Antoine coefficients
  enthalpy of vaporization, in order of preference
    1. VDI Heat Atlas PPDS equation 12 coefficients
    2. Perry's Handbook 8th ed. Table 2-150 (DIPPR equation 106)
    (hvap is left empty where neither exists or T is outside its range)

Temperatures: 15 points evenly spaced from max(triple point, correlation
Tmin) to min(0.95 Tc, correlation Tmax), with the triple point and Tc taken
from the catalogue TOML. A fluid with no published vapor-pressure correlation
in the library gets no file (the script says so).

For the fluids with NIST Chemistry WebBook SRD 69 saturation tables in
crates/fluids/data/reference/ (water, propane, isobutane, nitrogen, R-134a)
the header also states the correlation's largest deviation from that table
over the file's temperature range.

For the fluids in VDI_TABLE_FLUIDS (R-125 and R-134a: the correlations above
give them no enthalpy of vaporization) it also writes
crates/fluids/data/reference/<id>_vdi_saturation.csv with columns
T_K,P_Pa,rho_liq_kg_m3,hvap_kJ_kg: the VDI Heat Atlas (2nd ed., 2010)
saturated-state table that the library carries for the fluid, row by row,
with nothing interpolated.

build_catalogue.py imports psat_correlations() and vdi_table() from here to
derive triple-point pressures, so both scripts use the same correlations.
"""

from __future__ import annotations

import csv
import math
import tomllib
from pathlib import Path

import numpy as np

import chemicals
from chemicals import vapor_pressure as vp
from chemicals import phase_change as pc
from chemicals import miscdata
from chemicals.dippr import EQ101, EQ106

CHEMICALS_VERSION = "1.5.2"
if chemicals.__version__ != CHEMICALS_VERSION:
    raise SystemExit(f"need chemicals=={CHEMICALS_VERSION}, found {chemicals.__version__}")

REPO = Path(__file__).resolve().parents[2]
DATA_DIR = REPO / "crates" / "fluids" / "data"
REF_DIR = DATA_DIR / "reference"
N_POINTS = 15
EVAL = f"evaluated with the chemicals Python library {CHEMICALS_VERSION}"


def psat_correlations(cas: str) -> list:
    """Every published vapor-pressure correlation the library has for `cas`, in the order of
    preference of the module docstring, each as (function T->Pa, Tmin, Tmax, form text,
    source text, range text, short name)."""
    found = []
    table = vp.Psat_data_VDI_PPDS_3
    if cas in table.index:
        r = table.loc[cas]
        found.append((lambda T, r=r: vp.Wagner(T, r.Tc, r.Pc, r.A, r.B, r.C, r.D),
                float(r.Tm), float(r.Tc),
                "Wagner (2.5, 5): ln(P/Pc) = (Tc/T)(A tau + B tau^1.5 + C tau^2.5 + D tau^5), tau = 1 - T/Tc",
                f"VDI Heat Atlas, 2nd ed. (Springer 2010), PPDS vapour-pressure coefficients "
                f"(Tc = {r.Tc} K, Pc = {r.Pc} Pa, A = {r.A}, B = {r.B}, C = {r.C}, D = {r.D})",
                f"range listed with the coefficients: melting point {r.Tm} K to critical point {r.Tc} K",
                "VDI Heat Atlas PPDS Wagner equation"))
    table = vp.Psat_data_WagnerPoling
    if cas in table.index:
        r = table.loc[cas]
        found.append((lambda T, r=r: vp.Wagner(T, r.Tc, r.Pc, r.A, r.B, r.C, r.D),
                float(r.Tmin), float(r.Tmax),
                "Wagner (2.5, 5): ln(P/Pc) = (Tc/T)(A tau + B tau^1.5 + C tau^2.5 + D tau^5), tau = 1 - T/Tc",
                f"Poling, Prausnitz, O'Connell, The Properties of Gases and Liquids, 5th ed. (2001), "
                f"Appendix A, Wagner coefficients (Tc = {r.Tc} K, Pc = {r.Pc} Pa, A = {r.A}, B = {r.B}, "
                f"C = {r.C}, D = {r.D})",
                f"range listed with the coefficients: {r.Tmin} K to {r.Tmax} K",
                "Poling et al. (2001) Wagner equation"))
    table = vp.Psat_data_WagnerMcGarry
    if cas in table.index:
        r = table.loc[cas]
        found.append((lambda T, r=r: vp.Wagner_original(T, r.Tc, r.Pc, r.A, r.B, r.C, r.D),
                float(r.Tmin), float(r.Tc),
                "Wagner (3, 6): ln(P/Pc) = (Tc/T)(A tau + B tau^1.5 + C tau^3 + D tau^6), tau = 1 - T/Tc",
                f"McGarry, Ind. Eng. Chem. Process Des. Dev. 22 (1983) 313-322 "
                f"(Tc = {r.Tc} K, Pc = {r.Pc} Pa, A = {r.A}, B = {r.B}, C = {r.C}, D = {r.D})",
                f"range listed with the coefficients: Tmin {r.Tmin} K to the critical point {r.Tc} K",
                "McGarry (1983) Wagner equation"))
    table = vp.Psat_data_Perrys2_8
    if cas in table.index:
        r = table.loc[cas]
        found.append((lambda T, r=r: EQ101(T, r.C1, r.C2, r.C3, r.C4, r.C5),
                float(r.Tmin), float(r.Tmax),
                "DIPPR equation 101: ln(P/Pa) = C1 + C2/T + C3 ln(T) + C4 T^C5",
                f"Perry's Chemical Engineers' Handbook, 8th ed. (2007), Table 2-8 "
                f"(C1 = {r.C1}, C2 = {r.C2}, C3 = {r.C3}, C4 = {r.C4}, C5 = {r.C5})",
                f"range listed with the coefficients: {r.Tmin} K to {r.Tmax} K",
                "Perry's Handbook Table 2-8 (DIPPR equation 101)"))
    table = vp.Psat_data_AntoineExtended
    if cas in table.index:
        r = table.loc[cas]
        found.append((lambda T, r=r: vp.TRC_Antoine_extended(T, r.Tc, r.to, r.A, r.B, r.C, r.n, r.E, r.F),
                float(r.Tmin), float(r.Tmax),
                "TRC extended Antoine: log10(P/Pa) = A - B/(T + C) + 0.43429 x^n + E x^8 + F x^12, "
                "x = max((T - to - 273.15)/Tc, 0)",
                f"Poling, Prausnitz, O'Connell, The Properties of Gases and Liquids, 5th ed. (2001), "
                f"Appendix A, extended Antoine coefficients, converted to Pa and K "
                f"(A = {r.A}, B = {r.B}, C = {r.C}, Tc = {r.Tc}, to = {r.to}, n = {r.n}, E = {r.E}, F = {r.F})",
                f"range listed with the coefficients: {r.Tmin} K to {r.Tmax} K",
                "Poling et al. (2001) extended Antoine equation"))
    table = vp.Psat_data_AntoinePoling
    if cas in table.index:
        r = table.loc[cas]
        found.append((lambda T, r=r: vp.Antoine(T, r.A, r.B, r.C, base=10.0),
                float(r.Tmin), float(r.Tmax),
                "Antoine: log10(P/Pa) = A - B/(T + C)",
                f"Poling, Prausnitz, O'Connell, The Properties of Gases and Liquids, 5th ed. (2001), "
                f"Appendix A, Antoine coefficients, converted to Pa and K (A = {r.A}, B = {r.B}, C = {r.C})",
                f"range listed with the coefficients: {r.Tmin} K to {r.Tmax} K",
                "Poling et al. (2001) Antoine equation"))
    return found


def psat_correlation(cas: str):
    """The preferred published vapor-pressure correlation for `cas`, or None."""
    found = psat_correlations(cas)
    return found[0] if found else None


def hvap_correlation(cas: str, t_triple: float):
    """Return (function T->J/mol, Tmin, Tmax, form text, source text) or None."""
    table = pc.phase_change_data_VDI_PPDS_4
    if cas in table.index:
        r = table.loc[cas]
        low = t_triple
        if cas in vp.Psat_data_VDI_PPDS_3.index:
            low = max(low, float(vp.Psat_data_VDI_PPDS_3.loc[cas, "Tm"]))
        return (lambda T: pc.PPDS12(T, r.Tc, r.A, r.B, r.C, r.D, r.E), low, float(r.Tc),
                "PPDS equation 12: hvap = R Tc (A tau^(1/3) + B tau^(2/3) + C tau + D tau^2 + E tau^6), "
                "tau = 1 - T/Tc, R = 8.31446261815324 J/(mol K)",
                f"VDI Heat Atlas, 2nd ed. (Springer 2010), PPDS enthalpy-of-vaporization coefficients "
                f"(Tc = {r.Tc} K, A = {r.A}, B = {r.B}, C = {r.C}, D = {r.D}, E = {r.E}); "
                f"range used: {low} K (melting point listed with the vapour-pressure coefficients, or the catalogue triple point) to Tc")
    table = pc.phase_change_data_Perrys2_150
    if cas in table.index:
        r = table.loc[cas]
        return (lambda T: EQ106(T, r.Tc, r.C1, r.C2, r.C3, r.C4), float(r.Tmin), float(r.Tmax),
                "DIPPR equation 106: hvap = C1 (1 - Tr)^(C2 + C3 Tr + C4 Tr^2), Tr = T/Tc",
                f"Perry's Chemical Engineers' Handbook, 8th ed. (2007), Table 2-150 "
                f"(Tc = {r.Tc} K, C1 = {r.C1} J/mol, C2 = {r.C2}, C3 = {r.C3}, C4 = {r.C4}); "
                f"range listed with the coefficients: {r.Tmin} K to {r.Tmax} K")
    return None


def nist_table(fid: str, molar_mass: float):
    """(T K, P Pa, hvap J/mol or nan) from the NIST SRD 69 tables, or None."""
    files = {
        "water": ("water_saturation.csv", "T_C", "P_bar", 273.15, 1e5, "hvap_kJ_kg"),
        "propane": ("propane_saturation.csv", "T_K", "P_MPa", 0.0, 1e6, "hvap_kJ_kg"),
        "isobutane": ("isobutane_saturation.csv", "T_K", "P_MPa", 0.0, 1e6, "hvap_kJ_kg"),
        "nitrogen": ("nitrogen_saturation.csv", "T_K", "P_MPa", 0.0, 1e6, "hvap_kJ_kg"),
        "r134a": ("r134a_saturated_liquid.csv", "T_K", "P_MPa", 0.0, 1e6, None),
    }
    if fid not in files:
        return None
    name, tcol, pcol, toff, pconv, hcol = files[fid]
    lines = [l for l in (REF_DIR / name).read_text().splitlines() if not l.startswith("#")]
    rows = list(csv.DictReader(lines))
    temps = np.array([float(r[tcol]) + toff for r in rows])
    if fid == "water":
        temps[0] = 273.16  # the row labelled 0 C is the triple point (see the file header)
    press = np.array([float(r[pcol]) * pconv for r in rows])
    hvap = np.array([float(r[hcol]) * molar_mass * 1000.0 if hcol else math.nan for r in rows])
    return name, temps, press, hvap


# Fluids that get a VDI Heat Atlas saturation table file (see the module docstring).
VDI_TABLE_FLUIDS = ("r125", "r134a")
VDI_SOURCE = "VDI Heat Atlas, 2nd ed. (VDI e.V. ed., Springer 2010)"


def vdi_table(cas: str) -> dict | None:
    """The VDI Heat Atlas saturated-state table the library carries for `cas` (keys 'T' in K,
    'P' in Pa, 'Density (l)' in kg/m3, 'Hvap' in J/mol as converted by the library with the
    table's 'MW'), or None."""
    return miscdata.VDI_saturation_dict.get(cas)


def vdi_hvap_kj_per_kg(table: dict) -> list:
    """The table's enthalpies of vaporization in kJ/kg: the library stores them in J/mol,
    multiplied by the molar mass it lists with the table ('MW', g/mol), so dividing by that
    same number gives back the tabulated kJ/kg values (two decimals)."""
    return [None if h is None else round(h / table["MW"], 2) for h in table["Hvap"]]


def num(x: float) -> str:
    return f"{x:.10g}"


def write_vdi_table(fl: dict) -> None:
    fid, cas, name = fl["id"], fl["cas"], fl["name"]
    table = vdi_table(cas)
    if table is None:
        raise SystemExit(f"{fid}: no VDI Heat Atlas table in chemicals {CHEMICALS_VERSION}")
    mm_g = fl["molar_mass_kg_per_mol"]["value"] * 1000.0
    tt = fl["triple_point_temperature_k"]["value"]
    hv = vdi_hvap_kj_per_kg(table)
    header = [
        f"# fluid: {name} (id {fid}, CAS {cas})",
        f"# stated published source: {VDI_SOURCE}, saturated-state property table for "
        f"{table['Name']}, as tabulated in the chemicals Python library {CHEMICALS_VERSION} "
        "(miscdata.lookup_VDI_tabular_data)",
        "# columns: T, P and saturated-liquid density copied from the table; hvap_kJ_kg = the "
        "library's enthalpy of vaporization in J/mol divided by the molar mass the library lists "
        f"with the table ({table['MW']} g/mol), which gives back the table's kJ/kg values",
    ]
    if abs(table["MW"] / mm_g - 1.0) > 1e-3:
        header.append(
            f"# note: that listed molar mass is not the fluid's ({mm_g:.3f} g/mol, catalogue), so "
            "the library's J/mol values for this fluid are wrong by that ratio; the kJ/kg values "
            "here are not affected")
    header.append(
        f"# rows: {len(table['T'])}, {table['T'][0]} K (the lowest tabulated temperature; catalogue "
        f"triple point {tt} K) to {table['T'][-1]} K (catalogue Tc "
        f"{fl['critical_temperature_k']['value']} K); no hvap where the table gives none")
    rows = []
    for t, p, rho, h in zip(table["T"], table["P"], table["Density (l)"], hv):
        rows.append(f"{num(t)},{num(p)},{num(rho)},{'' if h is None else f'{h:.2f}'}")
    out = REF_DIR / f"{fid}_vdi_saturation.csv"
    with out.open("w", newline="") as fh:
        fh.write("\n".join(header) + "\n")
        fh.write("T_K,P_Pa,rho_liq_kg_m3,hvap_kJ_kg\n")
        fh.write("\n".join(rows) + "\n")
    print(f"{fid}: wrote {out.name} ({len(rows)} rows from the VDI Heat Atlas table)")


def main() -> None:
    fluids = []
    for path in sorted(DATA_DIR.glob("*.toml")):
        with path.open("rb") as fh:
            fluids.extend(tomllib.load(fh).get("fluid", []))

    for fl in fluids:
        if fl["id"] in VDI_TABLE_FLUIDS:
            write_vdi_table(fl)

    for fl in fluids:
        fid, cas, name = fl["id"], fl["cas"], fl["name"]
        tt = fl["triple_point_temperature_k"]["value"]
        tc = fl["critical_temperature_k"]["value"]
        mm = fl["molar_mass_kg_per_mol"]["value"]
        ps = psat_correlation(cas)
        out = REF_DIR / f"{fid}_vapor_pressure.csv"
        if ps is None:
            print(f"{fid}: no published vapor-pressure correlation in chemicals {CHEMICALS_VERSION}; no file written")
            if out.exists():
                out.unlink()
            continue
        f_p, p_min, p_max, p_form, p_src, p_range, _ = ps
        t_lo = max(tt, p_min)
        t_hi = min(0.95 * tc, p_max)
        temps = np.linspace(t_lo, t_hi, N_POINTS)
        hv = hvap_correlation(cas, tt)

        header = [
            f"# fluid: {name} (id {fid}, CAS {cas})",
            f"# vapor pressure correlation: {p_form}",
            f"# vapor pressure coefficients: {p_src}; {EVAL}",
            f"# vapor pressure {p_range}",
        ]
        if hv:
            f_h, h_min, h_max, h_form, h_src = hv
            header += [f"# enthalpy of vaporization correlation: {h_form}",
                       f"# enthalpy of vaporization coefficients: {h_src}; {EVAL}"]
        else:
            f_h = None
            header.append("# enthalpy of vaporization: no PPDS or DIPPR-106 correlation in the library; column left empty")
        header.append(
            f"# temperatures: {N_POINTS} points evenly spaced from max(triple point {tt} K, correlation Tmin) "
            f"to min(0.95 Tc = {0.95 * tc:.3f} K, correlation Tmax), triple point and Tc from the catalogue TOML")

        rows = []
        for t in temps:
            p = float(f_p(t))
            h = ""
            if f_h is not None and h_min <= t <= h_max:
                h = f"{float(f_h(t)):.6g}"
            rows.append((f"{t:.4f}", f"{p:.6g}", h))

        nist = nist_table(fid, mm)
        if nist:
            nname, nt, np_, nh = nist
            mask = (nt >= t_lo - 1e-9) & (nt <= t_hi + 1e-9)
            dev_p = np.abs(np.array([f_p(t) for t in nt[mask]]) / np_[mask] - 1.0)
            line = (f"# check against NIST Chemistry WebBook SRD 69 table {nname} ({mask.sum()} rows "
                    f"in {t_lo:.2f}-{t_hi:.2f} K): max |dP/P| = {100 * dev_p.max():.3f} % "
                    f"(at {nt[mask][dev_p.argmax()]:.2f} K)")
            if f_h is not None and np.isfinite(nh[mask]).any():
                hm = mask & np.isfinite(nh) & (nt >= h_min) & (nt <= h_max)
                dev_h = np.abs(np.array([f_h(t) for t in nt[hm]]) / nh[hm] - 1.0)
                line += f", max |dhvap/hvap| = {100 * dev_h.max():.3f} %"
            header.append(line)
            print(f"{fid}: {line[2:]}")

        with out.open("w", newline="") as fh:
            fh.write("\n".join(header) + "\n")
            fh.write("T_K,P_Pa,hvap_J_per_mol\n")
            for r in rows:
                fh.write(",".join(r) + "\n")
        print(f"{fid}: wrote {out.name} ({t_lo:.2f}-{t_hi:.2f} K, {'with' if f_h else 'no'} hvap)")


if __name__ == "__main__":
    main()
