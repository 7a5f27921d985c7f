"""The outside sources of the tests' expected values, each with its full citation.

A test whose expected value comes from outside the repository names one of these constants
beside the check, in a comment (``# sources.SPAN_2000 via sources.COOLPROP: 218.544 kg/m³``)
or by importing it and using it in the assertion message (``from sources import ESPOSITO_2009``).
tests/ is on ``sys.path`` (pytest's rootdir ``conftest.py``), so ``import sources`` works from
every test folder.  Checks with no outside source (arithmetic worked by hand, mathematics,
independent re-implementations, regression pins of our own values) name none.

Each :class:`Source` carries

* ``citation``: authors or body, title, journal or publisher, year, volume and pages, DOI or
  ISBN where known; for a library its name and the exact version the pinned numbers were
  computed with;
* ``confidence``: one of :data:`CONFIDENCE` (what the value is worth);
* ``values``: where each value the tests use comes from (page, table or example where known).

To add a source: add a constant here, name it beside the check, and say in ``values`` what the
check takes from it (tests/test_sources.py checks that every constant is complete).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "API_MPMS_11_1",
    "BREALEY_MYERS_ALLEN",
    "CENGEL_BOLES_2015",
    "CGPM_1901",
    "CODATA_2018",
    "COMMON_PRACTICE",
    "CONFIDENCE",
    "COOLPROP",
    "DEL_GROSSO_MADER_1972",
    "EN_837_1",
    "EN_10305_4",
    "ESPOSITO_2009",
    "IEC_60034_30_1",
    "IEC_60072_1",
    "ISO_3",
    "ISO_1219_1",
    "ISO_4413",
    "JOUKOWSKY_1900",
    "KORTEWEG_1878",
    "MICHAUD_1878",
    "NIST_HB44",
    "NIST_SP811",
    "OTIS_POURMOVAHED_1985",
    "PED_2014_68_EU",
    "POURMOVAHED_OTIS_1990",
    "RECALLED",
    "SPAN_2000",
    "WYLIE_STREETER_1993",
    "Source",
    "all_sources",
]

#: The confidence tags and what each means for a check.
CONFIDENCE = {
    "computed": (
        "computed with the named library at the stated version (or by the named relation); "
        "rerun to reproduce; the tolerance is the digits pinned"
    ),
    "standard relation": (
        "a law, definition or series fixed by the cited document and applied exactly "
        "(Boyle, the polytropic law, unit definitions, preferred numbers)"
    ),
    "from memory": (
        "recalled, not re-read in the document: a loose check with a tolerance that fits the "
        "recall, never a hard truth"
    ),
    "common practice, no published source": (
        "a rule of thumb of the trade: an editable default, checked for doing what it says, "
        "not for being right"
    ),
}


@dataclass(frozen=True)
class Source:
    """One outside source of expected values.

    Attributes
    ----------
    label : str
        Short name for comments and assertion messages, e.g. "Span et al. (2000)".
    citation : str
        Full citation (authors, title, journal or publisher, year, volume/pages, DOI/ISBN); for
        a library also its name and version.
    confidence : str
        One of the keys of :data:`CONFIDENCE`.
    values : str
        Where each value the tests take from it comes from (page, table, example).
    version : str
        Exact version, for a library; empty otherwise.
    """

    label: str
    citation: str
    confidence: str
    values: str
    version: str = ""

    def __str__(self) -> str:
        return f"{self.label} ({self.confidence})"


# --------------------------------------------------------------------------- nitrogen
SPAN_2000 = Source(
    "Span et al. (2000)",
    'R. Span, E. W. Lemmon, R. T. Jacobsen, W. Wagner, A. Yokozeki, "A reference equation of '
    "state for the thermodynamic properties of nitrogen for temperatures from 63.151 to 1000 K "
    'and pressures to 2200 MPa", J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000), '
    "doi:10.1063/1.1349047.",
    "computed",
    "Every nitrogen value (density, Z, isotherms, isentropes, isochores, internal energy) is "
    "computed from this equation of state with COOLPROP (fluid 'Nitrogen'); none is read from "
    "the paper's tables.  Molar mass 28.01348 g/mol (the paper's constant as CoolProp carries "
    "it).  The bound |B| < 25 cm³/mol on the second virial coefficient over -40...150 °C is "
    "from memory.",
)

COOLPROP = Source(
    "CoolProp 8.0.0",
    'I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and pseudo-pure fluid thermophysical '
    'property evaluation and the open-source thermophysical property library CoolProp", '
    "Ind. Eng. Chem. Res. 53(6), 2498-2508 (2014), doi:10.1021/ie4033999; software: CoolProp "
    "8.0.0 (the Python package 'CoolProp' from PyPI), fluid 'Nitrogen' (SPAN_2000).",
    "computed",
    "Pinned numbers computed with CoolProp 8.0.0 (PropsSI), all at 293.15 K unless said: "
    "rho and Z at 50/100/200/300/400 bar abs = 57.815/114.842/218.544/302.439/368.115 kg/m³ "
    "and 0.9940/1.0008/1.0518/1.1401/1.2489; 100 bar abs -> 114.84167763552414 kg/m³; "
    "isochore from 100 bar abs at 20 °C -> 112.58/91.58/83.12 bar abs at 50/0/-20 °C; "
    "isotherm, 10 L precharged to 90 bar abs, 100 -> 200 bar abs gives up 4.281 L; isentrope "
    "90 -> 200 bar abs: V2/V0 = 0.6195, T2 = 370.6 K; isentrope 200 -> 100 bar abs: "
    "V2/V1 = 1.464, T2 = 239.4 K.  Tests that call CoolProp live (PropsSI) use the installed "
    "version; the nitrogen table optimiser/physics/data/nitrogen_span2000.npz records the "
    "version it was built with.",
    version="8.0.0",
)

# --------------------------------------------------------------------------- thermodynamics
CENGEL_BOLES_2015 = Source(
    "Çengel & Boles (2015)",
    "Y. A. Çengel, M. A. Boles, Thermodynamics: An Engineering Approach, 8th ed., McGraw-Hill "
    "Education (2015), ISBN 978-0-07-339817-4.",
    "standard relation",
    "Standard relations the tests apply exactly: Boyle's law p·V = const (isothermal ideal "
    "gas); the polytropic law p·V^n = const in absolute pressures, so "
    "ΔV = V0·[(p0/p1)^(1/n) - (p0/p2)^(1/n)], n = 1 isothermal, n = κ = 1.4 adiabatic for "
    "nitrogen as an ideal gas; the ideal-gas isochore p(T) = p(20 °C)·T/293.15 K; the first "
    "law of closed and rigid systems.  Chapter and page not checked.  The sizing form "
    "V0 = ΔV·(p2/p0)/((p2/p1)^(1/n) - 1) for an isothermal charge and a polytropic discharge "
    "follows from the two laws (the handbook form itself is recalled).",
)

OTIS_POURMOVAHED_1985 = Source(
    "Otis & Pourmovahed (1985)",
    'D. R. Otis, M. Pourmovahed, "An algorithm for computing nonflow gas processes in gas '
    'springs and hydropneumatic accumulators", ASME J. Dyn. Syst. Meas. Control 107(1), 93-96 '
    "(1985) (title from memory; no DOI checked).",
    "from memory",
    "The thermal time-constant energy equation, with τ = m·cv/(h·Aw): "
    "dT/dt = (Tw - T)/τ - (T/cv)·(∂p/∂T)_v·dv/dt (ideal gas: (γ - 1)·T·(dV/dt)/V).  The "
    "tests check its exact mathematical limits (τ -> ∞: the isentrope, p·V^κ = const "
    "for the ideal gas; τ -> 0: the isotherm; fixed volume: T - Tw decays as e^(-t/τ)), and "
    "integrate a right-hand side written from this equation in tests/_textbook.py "
    "(CoolProp's (∂p/∂T)_v and cv for the real gas) against the code's integrator.",
)

POURMOVAHED_OTIS_1990 = Source(
    "Pourmovahed & Otis (1990)",
    'A. Pourmovahed, D. R. Otis, "An experimental thermal time-constant correlation for '
    'hydraulic accumulators", ASME J. Dyn. Syst. Meas. Control 112(1), 116-121 (1990) '
    "(no DOI checked).",
    "from memory",
    "Typical thermal time constants of litre-size gas volumes, about 1-10 s (recalled; the "
    "paper's correlation is not evaluated).  The design default of 5 s lies inside.",
)

# --------------------------------------------------------------------------- fluid power
ESPOSITO_2009 = Source(
    "Esposito, Fluid Power with Applications",
    "A. Esposito, Fluid Power with Applications, 7th ed., Pearson Prentice Hall (2009), "
    "ISBN 978-0-13-513690-4.",
    "from memory",
    "Accumulator chapter, car-crusher press example: a 6 in bore × 100 in stroke cylinder "
    "extends in 10 s, one stroke every 5 min; precharge 1200 psia, 1800-3000 psia, "
    "isothermal; ΔV = 2827 in³, accumulator 45.9 gal; pump 2.45 gpm with the accumulator "
    "against 73.4 gpm without.  Example 5-10: the pump of example 5-9 takes 12.57 kW; with "
    "an 85 % motor the motor input is 14.8 kW; 3000 h a year at 0.11 $/kWh cost about $4884. "
    "Inputs and printed results recalled (example numbers and the edition they belong to not "
    "re-checked); the arithmetic between them is computed in the tests.  Chapter on hydraulic "
    "conductors: recommended mean velocities, pump inlet lines 2-4 ft/s and working (pressure) "
    "lines 7-20 ft/s (recalled; the line-sizing limits of 1 and 5 m/s lie inside them).",
)

EN_10305_4 = Source(
    "EN 10305-4",
    'EN 10305-4, "Steel tubes for precision applications - Technical delivery conditions - '
    'Part 4: Seamless cold drawn tubes for hydraulic and pneumatic power systems", CEN.',
    "from memory",
    "Commonly stocked outside diameter x wall sizes of hydraulic tubes (6 x 1 ... 80 x 8 mm) "
    "and the steel grade E235 with a least yield strength of 235 MPa (recalled, edition not "
    "checked).",
)

EN_837_1 = Source(
    "EN 837-1",
    'EN 837-1, "Pressure gauges - Part 1: Bourdon tube pressure gauges - Dimensions, '
    'metrology, requirements and testing", CEN.',
    "from memory",
    "The scale ranges 0-1, 1.6, 2.5, 4, 6, 10, 16, 25, 40, 60, 100, 160, 250, 400, 600, "
    "1000 bar (recalled, edition not checked).",
)

WYLIE_STREETER_1993 = Source(
    "Wylie & Streeter (1993)",
    "E. B. Wylie, V. L. Streeter, Fluid Transients in Systems, Prentice Hall (1993), "
    "ISBN 0-13-322173-5.",
    "from memory",
    "Chapter 1: with a wave speed of about 1000 m/s a sudden 1 m/s change of velocity in "
    "water changes the head by about a/g ≈ 100 m.  Pipe constraint factors: c1 = 1 for a "
    "pipe free to move, 1 - ν² for one anchored throughout.",
)

JOUKOWSKY_1900 = Source(
    "Joukowsky (1898/1900)",
    'N. Joukowsky, "Über den hydraulischen Stoss in Wasserleitungsröhren", Mémoires de '
    "l'Académie Impériale des Sciences de St.-Pétersbourg, 8th series, 9(5) (1900) (Russian "
    "original 1898); English translation by O. Simin, Proc. American Water Works Association "
    "24, 341-424 (1904).",
    "from memory",
    "The surge of a sudden closure, Δp = ρ·a·Δv (applied exactly).",
)

KORTEWEG_1878 = Source(
    "Korteweg (1878)",
    'D. J. Korteweg, "Ueber die Fortpflanzungsgeschwindigkeit des Schalles in elastischen '
    'Röhren", Annalen der Physik 241(12), 525-542 (1878), doi:10.1002/andp.18782411206.',
    "from memory",
    "Wave speed in an elastic pipe, a = √(K/ρ / (1 + c1·K·D/(E·e))); a rigid pipe gives the "
    "speed of sound in the liquid.",
)

MICHAUD_1878 = Source(
    "Michaud (1878)",
    'J. Michaud, "Coups de bélier dans les conduites. Étude des moyens employés pour en '
    'atténuer les effets", Bulletin de la Société Vaudoise des Ingénieurs et des Architectes 4 '
    "(1878).",
    "from memory",
    "Slow closure, t_c > 2L/a: Δp ≈ 2·ρ·L·v/t_c.",
)

DEL_GROSSO_MADER_1972 = Source(
    "Del Grosso & Mader (1972)",
    'V. A. Del Grosso, C. W. Mader, "Speed of sound in pure water", J. Acoust. Soc. Am. '
    "52(5B), 1442-1446 (1972), doi:10.1121/1.1913258.",
    "from memory",
    "Speed of sound in pure water at 20 °C and 1 atm: 1482 m/s.",
)

API_MPMS_11_1 = Source(
    "API MPMS 11.1 / ASTM D1250",
    "American Petroleum Institute, Manual of Petroleum Measurement Standards, Chapter 11.1, "
    '"Temperature and Pressure Volume Correction Factors for Generalized Crude Oils, Refined '
    'Products, and Lubricating Oils" (2004); also issued as ASTM D1250-04.',
    "from memory",
    "Lubricating oils: thermal expansion α15 = (K0 + K1·ρ15)/ρ15² with K0 = 0, "
    "K1 = 0.6278 kg/(m³·K), i.e. 7.22e-4 1/K at 870 kg/m³.",
)

# --------------------------------------------------------------------------- standards, units
IEC_60034_30_1 = Source(
    "IEC 60034-30-1:2014",
    'IEC 60034-30-1:2014, "Rotating electrical machines - Part 30-1: Efficiency classes of '
    'line operated AC motors (IE code)", International Electrotechnical Commission (2014); '
    "with Commission Regulation (EU) 2019/1781 of 1 October 2019 (ecodesign requirements for "
    "electric motors and variable speed drives), OJ L 272, 25.10.2019, p. 74 (OJ reference "
    "from memory).",
    "from memory",
    "IE3 minimum efficiencies, 4-pole, 50 Hz, in % (0.75 kW 82.5 ... 160 kW 95.8, 200-1000 kW "
    "96.0): the table in tests/test_catalogue.py; defer to the standard's text.",
)

IEC_60072_1 = Source(
    "IEC 60072-1",
    'IEC 60072-1:1991, "Dimensions and output series for rotating electrical machines - '
    'Part 1: Frame numbers 56 to 400 and flange numbers 55 to 1080", International '
    "Electrotechnical Commission (1991).",
    "from memory",
    "Output ratings in kW: 0.12 0.18 0.25 0.37 0.55 0.75 1.1 1.5 2.2 3 4 5.5 7.5 11 15 18.5 "
    "22 30 37 45 55 75 90 110 132 160 200 250 315 355 400.",
)

ISO_3 = Source(
    "ISO 3",
    'ISO 3:1973, "Preferred numbers - Series of preferred numbers", International '
    "Organization for Standardization (1973).",
    "standard relation",
    "The R5, R10 and R20 series (rounded values of 10^(i/5), 10^(i/10), 10^(i/20)); R20: "
    "1.00 1.12 1.25 1.40 1.60 1.80 2.00 2.24 2.50 2.80 3.15 3.55 4.00 4.50 5.00 5.60 6.30 "
    "7.10 8.00 9.00.",
)

PED_2014_68_EU = Source(
    "Directive 2014/68/EU",
    "Directive 2014/68/EU of the European Parliament and of the Council of 15 May 2014 on the "
    "harmonisation of the laws of the Member States relating to the making available on the "
    "market of pressure equipment (recast), OJ L 189, 27.6.2014, p. 164.",
    "from memory",
    "Annex II, Table 2 (vessels, group 2 gases; an accumulator counts its whole shell "
    "volume): PS·V ≤ 50 bar·L (V > 1 L) sound engineering practice, 50-200 I, 200-1000 II, "
    "1000-3000 III, > 3000 IV; V ≤ 1 L: PS ≤ 1000 bar sound engineering practice, above it "
    "III.  Article 4(1)(a)(i): 'volume greater than 1 L'.  Defer to the directive's text and "
    "to local codes.",
)

ISO_1219_1 = Source(
    "ISO 1219-1",
    'ISO 1219-1, "Fluid power systems and components - Graphical symbols and circuit '
    "diagrams - Part 1: Graphical symbols for conventional use and data-processing "
    'applications", International Organization for Standardization (2012).',
    "from memory",
    "Which graphical symbol stands for tank, electric motor, fixed and variable pump, filter, "
    "cooler, relief valve, 2/2 solenoid valve, non-return valve, pressure switch, "
    "accumulators with bladder, diaphragm, piston and gas bottle, shut-off valve, gauge and "
    "enclosure (recalled, no copy at hand; edition not checked).",
)

ISO_4413 = Source(
    "ISO 4413:2010",
    'ISO 4413:2010, "Hydraulic fluid power - General rules and safety requirements for '
    'systems and their components", International Organization for Standardization (2010).',
    "from memory",
    "The safety cautions the report paraphrases: vent or positively isolate accumulator "
    "pressure at shutdown; warn that the system holds accumulators; mark the precharge, "
    "'use only nitrogen' and 'discharge prior to disassembly'; relief at or below the "
    "maximum allowable pressure; precharge with nitrogen only.",
)

NIST_HB44 = Source(
    "NIST Handbook 44",
    "NIST Handbook 44, Specifications, Tolerances, and Other Technical Requirements for "
    "Weighing and Measuring Devices, Appendix C (General Tables of Units of Measurement), "
    "National Institute of Standards and Technology (any edition since 1959).",
    "standard relation",
    "1 US gallon = 231 in³ = 3.785 411 784 L exactly.",
)

NIST_SP811 = Source(
    "NIST SP 811 (2008)",
    "A. Thompson, B. N. Taylor, Guide for the Use of the International System of Units (SI), "
    "NIST Special Publication 811, 2008 ed., National Institute of Standards and Technology "
    "(2008), Appendix B.",
    "standard relation",
    "1 psi (lbf/in²) = 6.894 757 E+03 Pa (exactly 6894.757293168... Pa from the definitions "
    "of the pound-force and the inch).",
)

CODATA_2018 = Source(
    "CODATA 2018",
    'E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended values of the '
    'fundamental physical constants: 2018", Rev. Mod. Phys. 93, 025010 (2021), '
    "doi:10.1103/RevModPhys.93.025010.",
    "standard relation",
    "Molar gas constant R = 8.314 462 618 J/(mol·K) (exact in the 2019 SI); with SPAN_2000's "
    "molar mass of nitrogen, R/M = 296.8022... J/(kg·K).",
)

CGPM_1901 = Source(
    "3rd CGPM (1901)",
    "Comptes rendus de la 3e Conférence générale des poids et mesures (1901), declaration on "
    "the unit of mass and the definition of weight; BIPM, The International System of Units "
    "(SI brochure), 9th ed. (2019).",
    "standard relation",
    "Standard acceleration of gravity g_n = 9.806 65 m/s² (exact by definition).",
)

# --------------------------------------------------------------------------- costs
BREALEY_MYERS_ALLEN = Source(
    "Brealey, Myers & Allen, Principles of Corporate Finance",
    "R. A. Brealey, S. C. Myers, F. Allen, Principles of Corporate Finance, McGraw-Hill "
    "(edition not checked; the annuity formula is the same in every edition).",
    "from memory",
    "Present value of an annuity: PV = C·[1/r - 1/(r·(1 + r)^t)] (a standard relation, "
    "checked against the sum of discounted payments); the appendix table's factors "
    "6.7101 (10 years at 8 %) and 4.3295 (5 years at 5 %) are recalled.",
)

# --------------------------------------------------------------------------- no document
COMMON_PRACTICE = Source(
    "common practice",
    "Rules of thumb of the hydraulics trade; no published source.",
    "common practice, no published source",
    "Accumulator rules (optimiser/physics/accumulator.py DEFAULT_RULES): bladder p2/p0 ≤ 4 "
    "(absolute), diaphragm 1:8 (1:6 conservative), piston unlimited; gas-over-oil up to about "
    "60 bar gauge; residual oil 10 % of the shell; precharge 0.9·p_min (bladder, diaphragm) "
    "or p_min - 5 bar (piston); flow limits per type.  Design defaults "
    "(optimiser/search/settings.py): line loss 5 bar, relief margin 10 % (at least 5 bar), "
    "standby 5 bar, dwell 1 s, 360 load events an hour, flow margin 10 %; relief valve "
    "passing the full pump flow 10 % above cracking.",
)

RECALLED = Source(
    "recalled values",
    "Physical properties recalled by the developers, with no document to cite.",
    "from memory",
    "Water at 20 °C: bulk modulus K = 2.19 GPa, density 998.2 kg/m³.",
)


def all_sources() -> dict[str, Source]:
    """Every source constant of this module by name."""
    return {name: value for name, value in globals().items() if isinstance(value, Source)}
