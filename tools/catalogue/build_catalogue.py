#!/usr/bin/env python3
"""Write the fluid catalogue TOML files in crates/fluids/data/.

This script records, value by value, where each number in the catalogue
comes from. It pulls values from:

* the handbook compilation of critical constants, copied with its header to
  crates/fluids/data/reference/critical_constants_compilation.csv;
* the `chemicals` Python library (version pinned below), whose tables each
  come from a published source; every value is cited by that published
  source plus "(as tabulated in the chemicals Python library 1.5.2)";
* the NIST Chemistry WebBook SRD 69 tables in crates/fluids/data/reference/;
* a few values recalled from reference-equation papers, marked `from memory`
  in their source text.

Triple-point pressures: a tabulated value where there is one (Staveley 1981,
the NIST WebBook, or the lowest row of a VDI Heat Atlas saturation table when
that row is at the triple point); else DERIVED from the first published
vapor-pressure correlation (in make_reference_points.py's order of preference)
whose listed range covers the triple-point temperature, or misses it by at
most PSAT_EXTRAPOLATION_MAX_K (the source text then says by how much),
evaluated at that temperature. A value with no source is left out, and the
fluid's entry gets a comment naming the sources searched (see gap_comment).
The library's 'HEOS' constants table (computed with thermophysical-property
software from reference equations of state) is not used as a source.

Run from the repository root:

    pip install chemicals==1.5.2 numpy
    python3 tools/catalogue/build_catalogue.py
    python3 tools/catalogue/check_data.py

The TOML files it writes are the catalogue; if you edit a value by hand,
make the same change here so that the two do not drift apart.
"""

from __future__ import annotations

import csv
import math
import sys
import textwrap
from pathlib import Path

import chemicals
from chemicals import critical, acentric, phase_change, triple, heat_capacity
from chemicals.identifiers import search_chemical

sys.dont_write_bytecode = True  # keep tools/catalogue free of __pycache__
sys.path.insert(0, str(Path(__file__).resolve().parent))
import fit_ideal_gas_cp  # noqa: E402
import make_reference_points as refpoints  # noqa: E402

CHEMICALS_VERSION = "1.5.2"
if chemicals.__version__ != CHEMICALS_VERSION:
    raise SystemExit(f"need chemicals=={CHEMICALS_VERSION}, found {chemicals.__version__}")

REPO = Path(__file__).resolve().parents[2]
DATA_DIR = REPO / "crates" / "fluids" / "data"
COMPILATION = DATA_DIR / "reference" / "critical_constants_compilation.csv"
R = 8.31446261815324  # J/(mol K), CODATA 2018 (exact: N_A k)

LIB = f"as tabulated in the chemicals Python library {CHEMICALS_VERSION}"

# --------------------------------------------------------------------------
# Citation keys. Each TOML file gets the subset of keys its fluids use.
# --------------------------------------------------------------------------
SOURCES = {
    "crit-compilation": (
        "Handbook compilation of critical constants (Perry's Chemical Engineers' Handbook 8th ed.; "
        "VDI Heat Atlas 2nd ed.; Yaws 2009; CRC Handbook 102nd ed.; NIST Chemistry WebBook; "
        "J. Chem. Eng. Data critical-property reviews), mean over sources, as compiled in the "
        "Supporting Information of Biswas, Leenhouts, Green et al., J. Chem. Inf. Model. 2023 "
        "(critical-property data set)"
    ),
    "vdi-heat-atlas-crit": (
        "VDI Heat Atlas, 2nd ed. (Springer 2010), part D3 (Kleiber, Joh, Span): per-source value "
        "listed in the handbook compilation of critical constants (Supporting Information of "
        "Biswas, Leenhouts, Green et al., J. Chem. Inf. Model. 2023)"
    ),
    "iupac-crit-reviews": (
        "IUPAC-sponsored reviews 'Vapor-Liquid Critical Properties of Elements and Compounds', "
        "parts 1-12 (Ambrose, Tsonopoulos, Young, Gude, Teja, Daubert, Kudchadker, Marsh, "
        f"Nikitin et al., J. Chem. Eng. Data 1995-2015), {LIB}"
    ),
    "mathews-1972": (
        "Mathews, 'Critical Constants of Inorganic Substances', Chem. Rev. 72 (1972) 71-100, "
        f"{LIB}"
    ),
    "pinamartinez-2022": (
        "Piña-Martinez, Privat, Jaubert, 'Use of 300,000 pseudo-experimental data over 1800 pure "
        "fluids to assess the performance of four cubic equations of state', AIChE J. 68 (2022) "
        f"e17518, supporting information (pure-component constants), {LIB}"
    ),
    "yaws-2014": (
        "Yaws, Thermophysical Properties of Chemicals and Hydrocarbons, 2nd ed. (Gulf Professional "
        f"Publishing 2014), {LIB}"
    ),
    "psrk-2005": (
        "Horstmann, Jabłoniec, Krafczyk, Fischer, Gmehling, 'PSRK group contribution equation of "
        "state: comprehensive revision and extension IV', Fluid Phase Equilib. 227 (2005) 157-164, "
        f"appendix, {LIB}"
    ),
    "crc-95": (
        "CRC Handbook of Chemistry and Physics, 95th ed. (Haynes, Bruno, Lide, 2014): physical "
        "constants of organic and inorganic compounds, enthalpy of fusion and enthalpy of "
        f"vaporization tables, {LIB}"
    ),
    "crc-95-melting": (
        "CRC Handbook of Chemistry and Physics, 95th ed. (2014), normal melting point used as the "
        "triple-point temperature (the two differ by hundredths of a kelvin for these substances), "
        f"{LIB}"
    ),
    "staveley-1981": (
        "Staveley, Lobo, Calado, 'Triple-points of low melting substances and their use in "
        "cryogenic work', Cryogenics 21 (1981) 131-144, temperatures converted to ITS-90, "
        f"{LIB}"
    ),
    "nist-webbook-phase": (
        "NIST Chemistry WebBook, NIST Standard Reference Database 69 (Shen, Siderius, Krekelberg, "
        f"Hatch eds., doi:10.18434/T4M88Q), phase-change data, {LIB}"
    ),
    "open-melting-point-2014": (
        "Bradley, Williams, Lang, 'Jean-Claude Bradley Open Melting Point Dataset' (figshare, "
        f"2014), melting point used as the triple-point temperature, {LIB}"
    ),
    "atomic-weights": (
        "Molar mass computed from the molecular formula with the standard atomic weights "
        f"{LIB} (its element table; these are the IUPAC 2005 standard atomic weights, "
        "identified from memory)"
    ),
    "poling-2001-appA": (
        "Poling, Prausnitz, O'Connell, The Properties of Gases and Liquids, 5th ed. (2001), "
        f"Appendix A, ideal-gas cp/R polynomial, {LIB}"
    ),
    "poling-2001-appA-monatomic": (
        "Poling, Prausnitz, O'Connell, The Properties of Gases and Liquids, 5th ed. (2001), "
        f"Appendix A, {LIB}: cp/R = 2.5 with no temperature range given; 50-1000 K is the range "
        "that table gives for the other gases"
    ),
    "joback-1987-estimate": (
        "ESTIMATE: Joback and Reid group-contribution method, 'Estimation of pure-component "
        "properties from group-contributions', Chem. Eng. Commun. 57 (1987) 233-243, ideal-gas cp "
        f"cubic in T divided by R, {LIB} (its Joback predictions table); no measured "
        "ideal-gas cp was available for this fluid; the method is typically within a few percent "
        "for hydrofluorocarbons; range 273-1000 K is the range usually quoted for the method "
        "(from memory)"
    ),
    "nist-srd69-cp-fit": (
        "least-squares fit (tools/catalogue/fit_ideal_gas_cp.py) to NIST Chemistry WebBook SRD 69 "
        "ideal-gas cp (1 Pa isobar; table in crates/fluids/data/reference/)"
    ),
    "iapws95-nist-srd69": (
        "IAPWS-95 formulation for water (Wagner and Pruß, J. Phys. Chem. Ref. Data 31 (2002) 387) "
        "as given in the NIST Chemistry WebBook SRD 69 (Lemmon, McLinden, Friend, doi:10.18434/T4D303): "
        "critical point 647.096 K, 22.064 MPa, 322.0 kg/m3; acentric factor 0.3443; normal boiling "
        "point 99.9743 C; triple point 273.16 K, 611.65 Pa (first row of the saturation table in "
        "crates/fluids/data/reference/water_saturation.csv)"
    ),
    "nist-srd69-r134a": (
        "NIST Chemistry WebBook SRD 69 saturation table for R-134a "
        "(crates/fluids/data/reference/r134a_saturated_liquid.csv): last row = critical point "
        "(374.21 K, 4.0591 MPa, 511.9 kg/m3); first row = triple point (169.86 K, 0.00039 MPa)"
    ),
    "span-2000-memory": (
        "Span, Lemmon, Jacobsen, Wagner, Yokozeki, 'A reference equation of state for the "
        "thermodynamic properties of nitrogen for temperatures from 63.151 to 1000 K and pressures "
        "to 2200 MPa', J. Phys. Chem. Ref. Data 29 (2000) 1361: critical point, from memory "
        "(the equation behind the NIST WebBook nitrogen tables)"
    ),
    "lemmon-2009-memory": (
        "Lemmon, McLinden, Wagner, 'Thermodynamic properties of propane. III. A reference equation "
        "of state for temperatures from the melting line to 650 K and pressures up to 1000 MPa', "
        "J. Chem. Eng. Data 54 (2009) 3141: critical point, from memory (the equation behind the "
        "NIST WebBook propane tables)"
    ),
    "richter-2011-memory": (
        "Richter, McLinden, Lemmon, 'Thermodynamic properties of 2,3,3,3-tetrafluoroprop-1-ene "
        "(R1234yf): vapor pressure and p-rho-T measurements and an equation of state', "
        "J. Chem. Eng. Data 56 (2011) 3254: value from memory"
    ),
    "thol-lemmon-2016-memory": (
        "Thol, Lemmon, 'Equation of state for the thermodynamic properties of "
        "trans-1,3,3,3-tetrafluoropropene [R-1234ze(E)]', Int. J. Thermophys. 37 (2016) 28: "
        "value from memory"
    ),
    "mondejar-2015-memory": (
        "Mondéjar, McLinden, Lemmon, 'Thermodynamic properties of trans-1-chloro-3,3,3-"
        "trifluoropropene (R1233zd(E)): vapor pressure, (p, rho, T) behavior, and speed of sound "
        "measurements, and equation of state', J. Chem. Eng. Data 60 (2015) 2477: value from memory"
    ),
    "lemmon-span-2006-memory": (
        "Lemmon, Span, 'Short fundamental equations of state for 20 industrial fluids', "
        "J. Chem. Eng. Data 51 (2006) 785 (R-245fa): value from memory"
    ),
    "ashrae34-memory": "ASHRAE Standard 34 safety classification, from memory",
    "ice-density-memory": (
        "Volume change on melting as a fraction of the liquid volume, 1 - rho_liquid/rho_ice = "
        "1 - 999.8/916.7, from the densities of ice Ih (916.7 kg/m3) and liquid water "
        "(999.8 kg/m3) at 0 C as tabulated in the CRC Handbook of Chemistry and Physics "
        "(edition and table from memory; the liquid value agrees with the 999.79 kg/m3 of "
        "crates/fluids/data/reference/water_saturation.csv at the triple point)"
    ),
}

# --------------------------------------------------------------------------
# Fluids. Per-fluid choices:
#   crit: where Tc and Pc come from -- "compilation" (mean over sources),
#         "iupac" / "mathews" (chemicals tables), or an explicit override.
#   Any property can be overridden with (value, source-key).
#   dvm: optional (value, source-key) for melting_volume_change_fraction, the
#        volume change on melting as a fraction of the liquid volume (negative
#        where the solid is less dense than the liquid, as for water).
# --------------------------------------------------------------------------
FILES = {
    "hfc.toml": "Hydrofluorocarbon (HFC) refrigerants.",
    "hcfc_hfo.toml": "HCFC and hydrofluoro-olefin (HFO / HCFO) refrigerants.",
    "hydrocarbons.toml": "Hydrocarbon refrigerants and process hydrocarbons (alkanes, alkene, cycloalkane).",
    "inorganic.toml": "Inorganic refrigerants and process gases.",
    "oxygenates_aromatics.toml": "Alcohols, a ketone, an ether refrigerant and aromatic solvents.",
}

HFC_CAUTION = "decomposes in flames to toxic hydrogen fluoride"
DISPLACES = "heavier than air and can displace oxygen in enclosed spaces"

FLUIDS = [
    # ---------------------------------------------------------------- HFC
    dict(file="hfc.toml", id="r32", name="R-32", ashrae_number="R-32",
         chemical_name="difluoromethane", formula="CH2F2", cas="75-10-5",
         aliases=["HFC-32", "R32", "difluoromethane", "methylene fluoride"],
         caution=f"Mildly flammable (A2L); {DISPLACES}; {HFC_CAUTION}.",
         safety_class="A2L", crit="compilation"),
    dict(file="hfc.toml", id="r125", name="R-125", ashrae_number="R-125",
         chemical_name="pentafluoroethane", formula="CHF2CF3", cas="354-33-6",
         aliases=["HFC-125", "R125", "pentafluoroethane"],
         caution=f"Non-flammable; {DISPLACES}; {HFC_CAUTION}.",
         safety_class="A1", crit="compilation"),
    dict(file="hfc.toml", id="r134a", name="R-134a", ashrae_number="R-134a",
         chemical_name="1,1,1,2-tetrafluoroethane", formula="CH2FCF3", cas="811-97-2",
         aliases=["HFC-134a", "R134a", "tetrafluoroethane", "norflurane"],
         caution=f"Non-flammable; {DISPLACES}; {HFC_CAUTION}.",
         safety_class="A1",
         crit=((374.21, "nist-srd69-r134a"), (4.0591e6, "nist-srd69-r134a")),
         rhoc=(511.9, "nist-srd69-r134a"),
         tt=(169.86, "nist-srd69-r134a"), pt=(390.0, "nist-srd69-r134a")),
    dict(file="hfc.toml", id="r143a", name="R-143a", ashrae_number="R-143a",
         chemical_name="1,1,1-trifluoroethane", formula="CH3CF3", cas="420-46-2",
         aliases=["HFC-143a", "R143a", "trifluoroethane"],
         caution=f"Mildly flammable (A2L); {DISPLACES}; {HFC_CAUTION}.",
         safety_class="A2L", crit="compilation"),
    dict(file="hfc.toml", id="r152a", name="R-152a", ashrae_number="R-152a",
         chemical_name="1,1-difluoroethane", formula="CH3CHF2", cas="75-37-6",
         aliases=["HFC-152a", "R152a", "difluoroethane", "ethylidene fluoride"],
         caution=f"Flammable (A2): keep ignition sources away; {DISPLACES}; {HFC_CAUTION}.",
         safety_class="A2", crit="compilation"),
    dict(file="hfc.toml", id="r23", name="R-23", ashrae_number="R-23",
         chemical_name="trifluoromethane", formula="CHF3", cas="75-46-7",
         aliases=["HFC-23", "R23", "fluoroform", "trifluoromethane"],
         caution=("Non-flammable; critical temperature near 26 C, so it is a high-pressure gas at "
                  f"room temperature; {DISPLACES}; {HFC_CAUTION}."),
         safety_class="A1", crit="compilation"),
    dict(file="hfc.toml", id="r227ea", name="R-227ea", ashrae_number="R-227ea",
         chemical_name="1,1,1,2,3,3,3-heptafluoropropane", formula="CF3CHFCF3", cas="431-89-0",
         aliases=["HFC-227ea", "R227ea", "heptafluoropropane"],
         caution=f"Non-flammable; {DISPLACES}; {HFC_CAUTION}.",
         safety_class="A1", crit="compilation"),
    dict(file="hfc.toml", id="r245fa", name="R-245fa", ashrae_number="R-245fa",
         chemical_name="1,1,1,3,3-pentafluoropropane", formula="CF3CH2CHF2", cas="460-73-1",
         aliases=["HFC-245fa", "R245fa", "pentafluoropropane"],
         caution=("Non-flammable; higher-toxicity class (B1): keep exposure below occupational "
                  f"limits; boils near 15 C; {DISPLACES}; {HFC_CAUTION}."),
         safety_class="B1", crit="compilation",
         # Yaws (0.33) disagrees with the Pitzer definition by ~0.045 for this fluid.
         omega=(0.3776, "lemmon-span-2006-memory")),
    # ------------------------------------------------------- HCFC and HFO
    dict(file="hcfc_hfo.toml", id="r22", name="R-22", ashrae_number="R-22",
         chemical_name="chlorodifluoromethane", formula="CHClF2", cas="75-45-6",
         aliases=["HCFC-22", "R22", "chlorodifluoromethane"],
         caution=("Non-flammable; ozone-depleting (phased out under the Montreal Protocol); "
                  f"{DISPLACES}; decomposes in flames to toxic acid gases."),
         safety_class="A1", crit="compilation"),
    dict(file="hcfc_hfo.toml", id="r1234yf", name="R-1234yf", ashrae_number="R-1234yf",
         chemical_name="2,3,3,3-tetrafluoroprop-1-ene", formula="CF3CF=CH2", cas="754-12-1",
         aliases=["HFO-1234yf", "R1234yf", "2,3,3,3-tetrafluoropropene"],
         caution=f"Mildly flammable (A2L); {DISPLACES}; {HFC_CAUTION}.",
         safety_class="A2L", crit="compilation",
         omega=(0.276, "richter-2011-memory"), tb=(243.665, "richter-2011-memory"),
         tt=(122.77, "richter-2011-memory")),
    dict(file="hcfc_hfo.toml", id="r1234ze", name="R-1234ze(E)", ashrae_number="R-1234ze(E)",
         chemical_name="trans-1,3,3,3-tetrafluoroprop-1-ene", formula="CF3CH=CHF", cas="29118-24-9",
         aliases=["HFO-1234ze(E)", "R1234ze(E)", "R-1234ze", "R1234ze",
                  "trans-1,3,3,3-tetrafluoropropene"],
         caution=f"Mildly flammable (A2L); {DISPLACES}; {HFC_CAUTION}.",
         safety_class="A2L", crit="compilation",
         omega=(0.313, "thol-lemmon-2016-memory"), tb=(254.177, "thol-lemmon-2016-memory"),
         tt=(169.0, "thol-lemmon-2016-memory")),
    dict(file="hcfc_hfo.toml", id="r1233zd", name="R-1233zd(E)", ashrae_number="R-1233zd(E)",
         chemical_name="trans-1-chloro-3,3,3-trifluoroprop-1-ene", formula="CF3CH=CHCl",
         cas="102687-65-0",
         aliases=["HCFO-1233zd(E)", "R1233zd(E)", "R-1233zd", "R1233zd",
                  "trans-1-chloro-3,3,3-trifluoropropene"],
         caution=("Non-flammable; boils near 18 C; "
                  f"{DISPLACES}; decomposes in flames to toxic acid gases."),
         safety_class="A1",
         crit=((439.6, "mondejar-2015-memory"), (3.6237e6, "mondejar-2015-memory")),
         rhoc=(480.2, "mondejar-2015-memory"),
         omega=(0.3025, "mondejar-2015-memory"), tb=(291.41, "mondejar-2015-memory"),
         tt=(195.15, "mondejar-2015-memory")),
    # -------------------------------------------------------- hydrocarbons
    dict(file="hydrocarbons.toml", id="propane", name="Propane", ashrae_number="R-290",
         chemical_name="propane", formula="CH3CH2CH3", cas="74-98-6",
         aliases=["R-290", "R290", "C3H8"],
         caution=("Highly flammable (A3): observe charge limits and keep ignition sources away; "
                  "heavier than air, so leaks collect in low spaces."),
         safety_class="A3",
         crit=((369.89, "lemmon-2009-memory"), (4.2512e6, "lemmon-2009-memory"))),
    dict(file="hydrocarbons.toml", id="butane", name="n-Butane", ashrae_number="R-600",
         chemical_name="butane", formula="CH3CH2CH2CH3", cas="106-97-8",
         aliases=["R-600", "R600", "n-butane", "normal butane"],
         caution=("Highly flammable (A3): observe charge limits and keep ignition sources away; "
                  "heavier than air, so leaks collect in low spaces."),
         safety_class="A3", crit="compilation"),
    dict(file="hydrocarbons.toml", id="isobutane", name="Isobutane", ashrae_number="R-600a",
         chemical_name="2-methylpropane", formula="CH(CH3)3", cas="75-28-5",
         aliases=["R-600a", "R600a", "2-methylpropane", "i-butane"],
         caution=("Highly flammable (A3): observe charge limits and keep ignition sources away; "
                  "heavier than air, so leaks collect in low spaces."),
         safety_class="A3",
         crit=((407.81, "vdi-heat-atlas-crit"), (3.629e6, "vdi-heat-atlas-crit"))),
    dict(file="hydrocarbons.toml", id="propylene", name="Propylene", ashrae_number="R-1270",
         chemical_name="prop-1-ene", formula="CH2=CHCH3", cas="115-07-1",
         aliases=["R-1270", "R1270", "propene"],
         caution=("Highly flammable (A3): observe charge limits and keep ignition sources away; "
                  "heavier than air, so leaks collect in low spaces."),
         safety_class="A3", crit="compilation"),
    dict(file="hydrocarbons.toml", id="ethane", name="Ethane", ashrae_number="R-170",
         chemical_name="ethane", formula="CH3CH3", cas="74-84-0",
         aliases=["R-170", "R170", "C2H6"],
         caution=("Highly flammable (A3); critical temperature near 32 C, so it is a "
                  "high-pressure gas at room temperature; asphyxiant in enclosed spaces."),
         safety_class="A3", crit="compilation"),
    dict(file="hydrocarbons.toml", id="methane", name="Methane", ashrae_number="R-50",
         chemical_name="methane", formula="CH4", cas="74-82-8",
         aliases=["R-50", "R50", "CH4"],
         caution=("Highly flammable (A3); supercritical at room temperature (critical point "
                  "near -83 C), so it is stored as a high-pressure gas or a cryogenic liquid; "
                  "asphyxiant in enclosed spaces."),
         safety_class="A3", crit="compilation"),
    dict(file="hydrocarbons.toml", id="pentane", name="n-Pentane", ashrae_number="R-601",
         chemical_name="pentane", formula="CH3(CH2)3CH3", cas="109-66-0",
         aliases=["R-601", "R601", "n-pentane"],
         caution=("Highly flammable liquid (A3); boils near 36 C; vapour is heavier than air and "
                  "can travel to ignition sources."),
         safety_class="A3", crit="compilation"),
    dict(file="hydrocarbons.toml", id="hexane", name="n-Hexane",
         chemical_name="hexane", formula="CH3(CH2)4CH3", cas="110-54-3",
         aliases=["n-hexane"],
         caution=("Highly flammable liquid; vapour is heavier than air and can travel to ignition "
                  "sources; nerve damage from long-term exposure."),
         crit="compilation"),
    dict(file="hydrocarbons.toml", id="heptane", name="n-Heptane",
         chemical_name="heptane", formula="CH3(CH2)5CH3", cas="142-82-5",
         aliases=["n-heptane"],
         caution=("Highly flammable liquid; vapour is heavier than air and can travel to ignition "
                  "sources."),
         crit="compilation"),
    dict(file="hydrocarbons.toml", id="cyclopentane", name="Cyclopentane",
         chemical_name="cyclopentane", formula="C5H10", cas="287-92-3",
         aliases=["pentamethylene"],
         caution=("Highly flammable liquid; boils near 49 C; vapour is heavier than air and can "
                  "travel to ignition sources."),
         crit="iupac"),
    # ------------------------------------------------------------ inorganic
    dict(file="inorganic.toml", id="carbondioxide", name="Carbon dioxide", ashrae_number="R-744",
         chemical_name="carbon dioxide", formula="CO2", cas="124-38-9",
         aliases=["R-744", "R744", "CO2"],
         caution=("Very high operating pressures (critical point near 31 C and 7.4 MPa); "
                  "asphyxiant and toxic at high concentration, heavier than air; triple-point "
                  "pressure is above atmospheric, so releases can form dry ice and block lines."),
         safety_class="A1", crit="compilation",
         # Triple-point pressure (0.518 MPa) is above 1 atm: CO2 has no normal boiling point.
         tb=None, comment=(
             "Carbon dioxide has no normal boiling point: its triple-point pressure (about 0.52 MPa)\n"
             "is above one atmosphere, so at 101.325 kPa it sublimes (near 194.7 K) instead of boiling.\n"
             "normal_boiling_point_k and enthalpy_of_vaporization_at_nbp_j_per_mol are therefore absent.")),
    dict(file="inorganic.toml", id="ammonia", name="Ammonia", ashrae_number="R-717",
         chemical_name="ammonia", formula="NH3", cas="7664-41-7",
         aliases=["R-717", "R717", "NH3", "anhydrous ammonia"],
         caution=("Toxic (B2L) with a pungent warning odour, and mildly flammable; corrosive to "
                  "copper and its alloys; lighter than air but cold releases can stay near the "
                  "ground."),
         safety_class="B2L", crit="compilation"),
    dict(file="inorganic.toml", id="water", name="Water", ashrae_number="R-718",
         chemical_name="water", formula="H2O", cas="7732-18-5",
         aliases=["R-718", "R718", "H2O", "steam"],
         caution=("Non-toxic and non-flammable; scalding hazard from hot liquid and steam; "
                  "freezes at 0 C and expands, which can burst pipes."),
         safety_class="A1",
         crit=((647.096, "iapws95-nist-srd69"), (22.064e6, "iapws95-nist-srd69")),
         rhoc=(322.0, "iapws95-nist-srd69"), omega=(0.3443, "iapws95-nist-srd69"),
         tb=(373.1243, "iapws95-nist-srd69"),
         tt=(273.16, "iapws95-nist-srd69"), pt=(611.65, "iapws95-nist-srd69"),
         # Ice Ih is less dense than liquid water, so the liquid shrinks on melting.
         dvm=(-0.0907, "ice-density-memory")),
    dict(file="inorganic.toml", id="nitrogen", name="Nitrogen", ashrae_number="R-728",
         chemical_name="nitrogen", formula="N2", cas="7727-37-9",
         aliases=["R-728", "R728", "N2", "dinitrogen"],
         caution=("Asphyxiant that displaces oxygen without warning; the cryogenic liquid causes "
                  "cold burns and expands about 700-fold on vaporising, which can over-pressurise "
                  "closed spaces."),
         safety_class="A1",
         crit=((126.192, "span-2000-memory"), (3.3958e6, "span-2000-memory"))),
    dict(file="inorganic.toml", id="oxygen", name="Oxygen", ashrae_number="R-732",
         chemical_name="oxygen", formula="O2", cas="7782-44-7",
         aliases=["R-732", "R732", "O2", "dioxygen"],
         caution=("Strong oxidiser: greatly accelerates combustion; keep oil, grease and "
                  "combustibles away from oxygen equipment; the cryogenic liquid causes cold burns."),
         crit="compilation"),
    dict(file="inorganic.toml", id="argon", name="Argon", ashrae_number="R-740",
         chemical_name="argon", formula="Ar", cas="7440-37-1",
         aliases=["R-740", "R740", "Ar"],
         caution=("Asphyxiant that displaces oxygen without warning and collects in low spaces; "
                  "the cryogenic liquid causes cold burns."),
         safety_class="A1", crit="mathews"),
    dict(file="inorganic.toml", id="hydrogensulfide", name="Hydrogen sulfide",
         chemical_name="hydrogen sulfide", formula="H2S", cas="7783-06-4",
         aliases=["H2S", "sulfane", "hydrogen sulphide"],
         caution=("Highly toxic and flammable; deadens the sense of smell at dangerous "
                  "concentrations, so rely on gas detection; heavier than air."),
         crit="compilation",
         # CRC 95th as tabulated (213.6 K) is ~0.75 K above the NIST WebBook, Yaws and the
         # VDI vapour-pressure equation (which gives 105 kPa at 213.6 K); use the WebBook value.
         tb_method="WEBBOOK"),
    dict(file="inorganic.toml", id="sulfurdioxide", name="Sulfur dioxide", ashrae_number="R-764",
         chemical_name="sulfur dioxide", formula="SO2", cas="7446-09-5",
         aliases=["R-764", "R764", "SO2", "sulphur dioxide"],
         caution=("Toxic (B1) and corrosive; severe respiratory irritant; forms sulfurous acid "
                  "with moisture; heavier than air."),
         safety_class="B1", crit="compilation"),
    dict(file="inorganic.toml", id="carbonmonoxide", name="Carbon monoxide",
         chemical_name="carbon monoxide", formula="CO", cas="630-08-0",
         aliases=["CO"],
         caution=("Highly toxic and flammable; colourless and odourless, so rely on gas "
                  "detection."),
         crit="compilation",
         # Yaws (0.0663) disagrees with the Pitzer definition by ~0.018 for this fluid.
         omega_method="PSRK"),
    # ---------------------------------------------- oxygenates and aromatics
    dict(file="oxygenates_aromatics.toml", id="methanol", name="Methanol",
         chemical_name="methanol", formula="CH3OH", cas="67-56-1",
         aliases=["methyl alcohol", "MeOH", "wood alcohol"],
         caution=("Flammable liquid that burns with a nearly invisible flame; toxic if swallowed, "
                  "inhaled or absorbed through the skin."),
         crit="compilation"),
    dict(file="oxygenates_aromatics.toml", id="ethanol", name="Ethanol",
         chemical_name="ethanol", formula="CH3CH2OH", cas="64-17-5",
         aliases=["ethyl alcohol", "EtOH"],
         caution="Flammable liquid; vapour forms explosive mixtures with air.",
         crit="compilation"),
    dict(file="oxygenates_aromatics.toml", id="acetone", name="Acetone",
         chemical_name="propan-2-one", formula="CH3COCH3", cas="67-64-1",
         aliases=["propanone", "2-propanone", "dimethyl ketone"],
         caution=("Highly flammable liquid; vapour is heavier than air and can travel to ignition "
                  "sources."),
         crit="iupac",
         # Staveley 1981 as tabulated (176.73 K) is 1.8 K below every other source; use the
         # NIST WebBook triple point instead.
         tt_method="WEBBOOK"),
    dict(file="oxygenates_aromatics.toml", id="benzene", name="Benzene",
         chemical_name="benzene", formula="C6H6", cas="71-43-2",
         aliases=["benzol"],
         caution=("Highly flammable liquid; known human carcinogen, so keep exposure as low as "
                  "possible."),
         # The compilation's 'benzene' row carries cyclohexane's constants (M = 84.16), so the
         # IUPAC review values are used.
         crit="iupac"),
    dict(file="oxygenates_aromatics.toml", id="toluene", name="Toluene",
         chemical_name="methylbenzene", formula="C6H5CH3", cas="108-88-3",
         aliases=["methylbenzene", "toluol"],
         caution="Highly flammable liquid; harmful vapour; suspected reproductive toxicant.",
         # The compilation's 'toluene' row carries methylcyclohexane's constants (M = 98.19).
         crit="iupac"),
    dict(file="oxygenates_aromatics.toml", id="dimethylether", name="Dimethyl ether",
         ashrae_number="R-E170",
         chemical_name="methoxymethane", formula="CH3OCH3", cas="115-10-6",
         aliases=["R-E170", "RE170", "DME", "methoxymethane"],
         caution=("Highly flammable (A3); heavier than air, so leaks collect in low spaces."),
         safety_class="A3", crit="compilation"),
]

# Compilation rows by fluid id (label column of the compilation).
COMPILATION_LABEL = {
    "r32": "R-32", "r125": "R-125", "r143a": "R-143a", "r152a": "R-152a", "r23": "R-23",
    "r227ea": "R-227ea", "r245fa": "R-245fa", "r22": "R-22", "r1234yf": "R-1234yf",
    "r1234ze": "R-1234ze(E)", "butane": "n-butane", "propylene": "propylene", "ethane": "ethane",
    "methane": "methane", "pentane": "n-pentane", "hexane": "n-hexane", "heptane": "n-heptane",
    "carbondioxide": "carbon dioxide", "ammonia": "ammonia", "oxygen": "oxygen",
    "hydrogensulfide": "hydrogen sulfide", "sulfurdioxide": "sulfur dioxide",
    "carbonmonoxide": "carbon monoxide", "methanol": "methanol", "ethanol": "ethanol",
    "dimethylether": "dimethyl ether",
}

# Ideal-gas cp from the Joback estimate for fluids with no tabulated polynomial.
JOBACK_CP = {"r227ea", "r245fa", "r1234yf", "r1234ze", "r1233zd"}


def sig(x: float, digits: int) -> float:
    """Round x to `digits` significant figures."""
    if x == 0:
        return 0.0
    return round(x, digits - 1 - int(math.floor(math.log10(abs(x)))))


def read_compilation() -> dict[str, dict[str, str]]:
    lines = [l for l in COMPILATION.read_text().splitlines() if not l.startswith("#")]
    return {row["label"]: row for row in csv.DictReader(lines)}


def crit_point(fl: dict, comp: dict) -> tuple[tuple[float, str], tuple[float, str]]:
    choice = fl["crit"]
    cas = fl["cas"]
    if isinstance(choice, tuple):
        return choice
    if choice == "compilation":
        row = comp[COMPILATION_LABEL[fl["id"]]]
        return ((float(row["Tc_mean_K"]), "crit-compilation"),
                (sig(float(row["Pc_mean_bar"]) * 1e5, 6), "crit-compilation"))
    method, key = {"iupac": ("IUPAC", "iupac-crit-reviews"), "mathews": ("MATTHEWS", "mathews-1972")}[choice]
    return ((critical.Tc(cas, method=method), key), (sig(critical.Pc(cas, method=method), 6), key))


def critical_density(fl: dict, molar_mass: float) -> tuple[float, str]:
    if "rhoc" in fl:
        return fl["rhoc"]
    cas = fl["cas"]
    for method, key in (("IUPAC", "iupac-crit-reviews"), ("MATTHEWS", "mathews-1972"),
                        ("CRC", "crc-95"), ("PINAMARTINES", "pinamartinez-2022"),
                        ("YAWS", "yaws-2014")):
        if method in critical.Vc_methods(cas):
            return (sig(molar_mass / critical.Vc(cas, method=method), 4), key)
    raise SystemExit(f"{fl['id']}: no critical volume")


def acentric_factor(fl: dict) -> tuple[float, str]:
    if "omega" in fl:
        return fl["omega"]
    method = fl.get("omega_method", "YAWS")
    key = {"YAWS": "yaws-2014", "PSRK": "psrk-2005"}[method]
    return (acentric.omega(fl["cas"], method=method), key)


def boiling_point(fl: dict):
    if "tb" in fl:
        return fl["tb"]
    cas = fl["cas"]
    methods = phase_change.Tb_methods(cas)
    if fl.get("tb_method") == "WEBBOOK":
        return (round(phase_change.Tb(cas, method="WEBBOOK"), 2), "nist-webbook-phase")
    order = ("CRC_INORG", "CRC_ORG") if fl["file"] == "inorganic.toml" else ("CRC_ORG", "CRC_INORG")
    for method in order:
        if method in methods:
            return (phase_change.Tb(cas, method=method), "crc-95")
    if "YAWS" in methods:
        return (phase_change.Tb(cas, method="YAWS"), "yaws-2014")
    raise SystemExit(f"{fl['id']}: no normal boiling point")


def triple_temperature(fl: dict) -> tuple[float, str]:
    if "tt" in fl:
        return fl["tt"]
    cas = fl["cas"]
    forced = fl.get("tt_method")
    if forced == "WEBBOOK":
        return (round(triple.Tt(cas, method="WEBBOOK"), 2), "nist-webbook-phase")
    if "STAVELEY" in triple.Tt_methods(cas):
        return (round(triple.Tt(cas, method="STAVELEY"), 3), "staveley-1981")
    tm_methods = phase_change.Tm_methods(cas)
    for method in ("CRC_INORG", "CRC_ORG"):
        if method in tm_methods:
            return (phase_change.Tm(cas, method=method), "crc-95-melting")
    if "WEBBOOK" in triple.Tt_methods(cas):
        return (round(triple.Tt(cas, method="WEBBOOK"), 2), "nist-webbook-phase")
    if "OPEN_NTBKM" in tm_methods:
        return (phase_change.Tm(cas, method="OPEN_NTBKM"), "open-melting-point-2014")
    raise SystemExit(f"{fl['id']}: no triple point")


# A VDI Heat Atlas table's lowest row counts as the triple point when it is this close to the
# catalogue's triple-point temperature (the tables start at the triple point: R-22 115.73 K,
# R-125 172.52 K, R-134a 169.85 K, methanol 175.61 K, benzene 278.7 K).
VDI_TRIPLE_ROW_TOLERANCE_K = 0.05
# Largest extrapolation of a vapor-pressure correlation below its listed range for a derived
# triple-point pressure.
PSAT_EXTRAPOLATION_MAX_K = 1.0
TABULATED_PT_SEARCHED = (
    "Staveley et al. 1981 triple points, NIST WebBook phase-change data and the VDI Heat Atlas "
    f"saturation tables, as tabulated in the chemicals Python library {CHEMICALS_VERSION}"
)


def triple_pressure(fl: dict, tt: tuple[float, str], tb) -> tuple[float, str] | None:
    if "pt" in fl:
        return fl["pt"]
    cas = fl["cas"]
    methods = triple.Pt_methods(cas)
    if "STAVELEY" in methods:
        return (sig(triple.Pt(cas, method="STAVELEY"), 5), "staveley-1981")
    if "WEBBOOK" in methods:
        p = triple.Pt(cas, method="WEBBOOK")
        # Reject implausible entries: below the normal boiling point the
        # triple-point pressure must be below one atmosphere.
        if not (tb is not None and tt[0] < tb[0] and not p < 101325.0):
            return (sig(p, 5), "nist-webbook-phase")
    table = refpoints.vdi_table(cas)
    if table is not None and abs(table["T"][0] - tt[0]) <= VDI_TRIPLE_ROW_TOLERANCE_K:
        key = f"vdi-table-triple-{fl['id']}"
        SOURCES[key] = (
            f"{refpoints.VDI_SOURCE}, saturated-state property table for {table['Name']}: vapor "
            f"pressure in its lowest row, at {table['T'][0]} K, the triple point (the catalogue "
            f"triple-point temperature, {tt[0]} K, is {abs(table['T'][0] - tt[0]):.2f} K away), "
            f"{LIB}"
        )
        return (sig(table["P"][0], 5), key)
    usable = [c for c in refpoints.psat_correlations(cas)
              if c[1] - PSAT_EXTRAPOLATION_MAX_K <= tt[0] <= c[2]]
    if not usable:
        return None
    f_p, lo, hi, form, src, rng, short = usable[0]
    where = ("inside the range listed with the coefficients" if tt[0] >= lo else
             f"an extrapolation {lo - tt[0]:.2f} K below the lowest temperature listed with "
             "the coefficients")
    others = [float(c[0](tt[0])) for c in usable[1:]]
    if not others:
        spread = "no other correlation in the library reaches this temperature"
    elif len(others) == 1:
        spread = (f"the one other correlation in the library that reaches this temperature "
                  f"gives {sig(others[0], 3)} Pa there")
    else:
        spread = (f"the library's other correlations that reach this temperature give "
                  f"{sig(min(others), 3)} to {sig(max(others), 3)} Pa there")
    key = f"psat-at-triple-{fl['id']}"
    SOURCES[key] = (
        f"DERIVED: {short}, {form}, with the coefficients of {src}, evaluated at the "
        f"catalogue triple-point temperature T = {tt[0]} K (source key {tt[1]}): {where} "
        f"({rng}); {refpoints.EVAL}. No tabulated triple-point pressure was found "
        f"({TABULATED_PT_SEARCHED}); {spread}"
    )
    return (sig(float(f_p(tt[0])), 4), key)


def heat_of_fusion(fl: dict) -> tuple[float, str] | None:
    cas = fl["cas"]
    if "CRC" in phase_change.Hfus_methods(cas):
        return (phase_change.Hfus(cas, method="CRC"), "crc-95")
    return None


def hvap_at_nbp(fl: dict, comp: dict, tb, molar_mass: float) -> tuple[float, str] | None:
    cas = fl["cas"]
    table = phase_change.Hvap_data_CRC
    if cas in table.index and not math.isnan(table.loc[cas, "HvapTb"]):
        return (float(table.loc[cas, "HvapTb"]), "crc-95")
    label = COMPILATION_LABEL.get(fl["id"])
    if label and comp[label]["dHvap_at_Tb_mean_kJ_mol"]:
        return (sig(float(comp[label]["dHvap_at_Tb_mean_kJ_mol"]) * 1000.0, 5), "crit-compilation")
    vdi = refpoints.vdi_table(cas)
    if vdi is not None:
        # A row of the VDI Heat Atlas table at the catalogue's normal boiling point.
        for t, p, h in zip(vdi["T"], vdi["P"], refpoints.vdi_hvap_kj_per_kg(vdi)):
            if h is not None and abs(t - tb[0]) <= 0.005 and abs(p / 101325.0 - 1.0) < 1e-3:
                key = f"vdi-table-hvap-nbp-{fl['id']}"
                SOURCES[key] = (
                    f"{refpoints.VDI_SOURCE}, saturated-state property table for {vdi['Name']}: "
                    f"enthalpy of vaporization {h} kJ/kg in its row at {t} K and {p:.0f} Pa (the "
                    f"normal boiling point), times the catalogue molar mass {molar_mass} kg/mol; "
                    f"{LIB} (the kJ/kg value recovered as described in "
                    f"crates/fluids/data/reference/{fl['id']}_vdi_saturation.csv)"
                )
                return (sig(h * molar_mass * 1000.0, 5), key)
    return None


def gap_comment(fl: dict, pt, hfus, hvap, tb) -> list[str]:
    """Comment lines naming the sources searched for each optional value left out."""
    notes = []
    if pt is None:
        notes.append(
            "triple_point_pressure_pa: none in Staveley 1981, the NIST WebBook or the VDI Heat "
            "Atlas tables, and no published vapor-pressure correlation (VDI PPDS, Poling 2001, "
            "McGarry 1983, Perry's Table 2-8) to derive one from. (The library's 'HEOS' constants, "
            "computed with property software from reference equations of state, are not used.)"
        )
    if hfus is None:
        notes.append(
            "heat_of_fusion_j_per_mol: none in the CRC Handbook table, the NIST WebBook or "
            "Wikidata (the library has only a Joback group-contribution estimate, not used)."
        )
    if hvap is None and tb is not None:
        notes.append(
            "enthalpy_of_vaporization_at_nbp_j_per_mol: none in the CRC Handbook table, the "
            "handbook compilation (critical_constants_compilation.csv) or a VDI Heat Atlas table "
            "row at the normal boiling point."
        )
    if not notes:
        return []
    lines = [f"Values left out for {fl['id']}: no published source in the chemicals Python",
             f"library {CHEMICALS_VERSION}. Searched there:"]
    for note in notes:
        wrapped = textwrap.wrap(note, width=94, break_on_hyphens=False)
        lines += ["- " + wrapped[0]] + ["  " + w for w in wrapped[1:]]
    return lines


def ideal_gas_cp(fl: dict, fits: dict) -> dict:
    fid, cas = fl["id"], fl["cas"]
    poling_table = heat_capacity.Cp_data_Poling
    if fid in fits:
        fit = fits[fid]
        poling = fit["poling"]
        if poling is None or fit["fit_max_rel_dev"] < poling["max_rel_dev"]:
            return dict(coefficients=fit["coefficients"], t_min_k=fit["t_min_k"],
                        t_max_k=fit["t_max_k"], source="nist-srd69-cp-fit",
                        note=(f"fit max deviation {100 * fit['fit_max_rel_dev']:.3f} % vs "
                              f"Poling App. A {100 * poling['max_rel_dev']:.3f} % over the table range"
                              if poling else None))
    if fid in JOBACK_CP:
        import pandas as pd
        path = Path(chemicals.__file__).parent / "Misc" / "joback_predictions.tsv"
        table = pd.read_csv(path, sep="\t", index_col=0)
        row = table.loc[int(cas.replace("-", ""))]
        coefs = [float(row[f"Cpg{k}"]) / R for k in range(4)] + [0.0]
        return dict(coefficients=[sig(c, 6) for c in coefs], t_min_k=273.15, t_max_k=1000.0,
                    source="joback-1987-estimate", note=None)
    row = poling_table.loc[cas]
    if math.isnan(row["Tmin"]):
        # Monatomic gas: Poling lists a0 = 2.5 only.
        return dict(coefficients=[float(row["a0"]), 0.0, 0.0, 0.0, 0.0], t_min_k=50.0,
                    t_max_k=1000.0, source="poling-2001-appA-monatomic", note=None)
    return dict(coefficients=[float(row[f"a{k}"]) for k in range(5)], t_min_k=float(row["Tmin"]),
                t_max_k=float(row["Tmax"]), source="poling-2001-appA", note=None)


# --------------------------------------------------------------------------
# TOML writing
# --------------------------------------------------------------------------

def fmt_num(x: float) -> str:
    """Shortest round-trip float text, always with a decimal point or exponent."""
    text = repr(float(x))
    if "e" in text or "E" in text:
        mant, exp = text.lower().split("e")
        if "." not in mant:
            mant += ".0"
        return f"{mant}e{int(exp)}"
    if "." not in text:
        text += ".0"
    return text


def fmt_pressure(x: float) -> str:
    """Pressures >= 1e5 Pa in engineering-friendly exponent form, e.g. 4.0591e6."""
    if x >= 1e5:
        exp = int(math.floor(math.log10(x)))
        mant = x / 10**exp
        mant_text = repr(round(mant, 10))
        return f"{mant_text}e{exp}"
    return fmt_num(x)


def toml_str(s: str) -> str:
    return '"' + s.replace("\\", "\\\\").replace('"', '\\"') + '"'


def value_line(key: str, val: tuple[float, str], pressure: bool = False) -> str:
    number = fmt_pressure(val[0]) if pressure else fmt_num(val[0])
    return f"{key} = {{ value = {number}, source = {toml_str(val[1])} }}"


def build() -> None:
    comp = read_compilation()
    fits = fit_ideal_gas_cp.fit_all()
    blocks: dict[str, list[str]] = {name: [] for name in FILES}
    used: dict[str, list[str]] = {name: [] for name in FILES}

    def use(file: str, key: str) -> str:
        if key not in SOURCES:
            raise SystemExit(f"unknown source key {key}")
        if key not in used[file]:
            used[file].append(key)
        return key

    ids = set()
    for fl in FLUIDS:
        fid, file = fl["id"], fl["file"]
        if fid in ids:
            raise SystemExit(f"duplicate id {fid}")
        ids.add(fid)
        chem = search_chemical(fl["cas"])
        if chem.CASs != fl["cas"]:
            raise SystemExit(f"{fid}: CAS lookup mismatch {chem.CASs}")
        molar_mass = (float(f"{chem.MW / 1000.0:.10g}"), "atomic-weights")
        tc, pc = crit_point(fl, comp)
        rhoc = critical_density(fl, molar_mass[0])
        omega = acentric_factor(fl)
        tb = boiling_point(fl)
        tt = triple_temperature(fl)
        pt = triple_pressure(fl, tt, tb)
        hfus = heat_of_fusion(fl)
        hvap = hvap_at_nbp(fl, comp, tb, molar_mass[0]) if tb is not None else None
        cp = ideal_gas_cp(fl, fits)

        lines = []
        if fl.get("comment"):
            lines += ["# " + c for c in fl["comment"].splitlines()]
        if cp.get("note"):
            lines.append(f"# ideal_gas_cp: {cp['note']}.")
        lines += ["# " + c for c in gap_comment(fl, pt, hfus, hvap, tb)]
        lines.append("[[fluid]]")
        lines.append(f"id = {toml_str(fid)}")
        lines.append(f"name = {toml_str(fl['name'])}")
        if fl.get("ashrae_number"):
            lines.append(f"ashrae_number = {toml_str(fl['ashrae_number'])}")
        lines.append(f"chemical_name = {toml_str(fl['chemical_name'])}")
        lines.append(f"formula = {toml_str(fl['formula'])}")
        lines.append(f"cas = {toml_str(fl['cas'])}")
        lines.append("aliases = [" + ", ".join(toml_str(a) for a in fl["aliases"]) + "]")
        lines.append(f"caution = {toml_str(fl['caution'])}")
        if fl.get("safety_class"):
            lines.append(f"safety_class = {{ value = {toml_str(fl['safety_class'])}, "
                         f"source = {toml_str(use(file, 'ashrae34-memory'))} }}")
        for key, val, is_p in (
            ("molar_mass_kg_per_mol", molar_mass, False),
            ("critical_temperature_k", tc, False),
            ("critical_pressure_pa", pc, True),
            ("critical_density_kg_per_m3", rhoc, False),
            ("acentric_factor", omega, False),
            ("normal_boiling_point_k", tb, False),
            ("triple_point_temperature_k", tt, False),
            ("triple_point_pressure_pa", pt, True),
            ("heat_of_fusion_j_per_mol", hfus, False),
            ("enthalpy_of_vaporization_at_nbp_j_per_mol", hvap, False),
            ("melting_volume_change_fraction", fl.get("dvm"), False),
        ):
            if val is None:
                continue
            use(file, val[1])
            lines.append(value_line(key, val, pressure=is_p))
        use(file, cp["source"])
        coef_text = ", ".join(fmt_num(c) for c in cp["coefficients"])
        lines.append(
            f"ideal_gas_cp = {{ form = \"cp_over_r_polynomial\", coefficients = [{coef_text}], "
            f"t_min_k = {fmt_num(cp['t_min_k'])}, t_max_k = {fmt_num(cp['t_max_k'])}, "
            f"source = {toml_str(cp['source'])} }}"
        )
        blocks[file].append("\n".join(lines))

    for file, description in FILES.items():
        out = [f"# {description}",
               "# Values pulled by tools/catalogue/build_catalogue.py (it records the choice of source for",
               "# each value); checked by tools/catalogue/check_data.py. Units: kg/mol, K, Pa, kg/m3, J/mol.",
               "",
               "[sources]"]
        for key in used[file]:
            out.append(f"{key} = {toml_str(SOURCES[key])}")
        out.append("")
        out.append("\n\n".join(blocks[file]))
        (DATA_DIR / file).write_text("\n".join(out) + "\n")
        print(f"wrote {DATA_DIR / file} ({len(blocks[file])} fluids)")


if __name__ == "__main__":
    build()
