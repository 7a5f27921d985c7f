"""Oil and pipe properties the duties use by default, each with its value and its source.

Every value here is an **editable default**, not a hard truth: the duty functions take each one
as a keyword argument and the ``stowflow size`` options override them.  Values marked "from
memory" were recalled, not read in a stored document; treat them as typical values and use the
oil maker's data sheet and the pipe standard for a real design.

=====================  ==========  ==========  ================================================
name                   value       unit        source, confidence
=====================  ==========  ==========  ================================================
OIL_DENSITY            870         kg/m³       mineral hydraulic oil ISO VG 32–68 at 15 °C,
                                               typical 860–880 (from memory)
OIL_BULK_MODULUS       1.7e9       Pa          isentropic, near 0 bar gauge and 40 °C; typical
                                               1.5–1.8 GPa; 1.72 GPa = 250 000 psi as used in
                                               Esposito's textbook (from memory)
OIL_EXPANSION          7.0e-4      1/K         volumetric, mineral oil near 15–60 °C; the
                                               API/ASTM petroleum measurement relation for
                                               lubricating oils, α = K1/ρ15 with K1 = 0.6278
                                               kg/(m³·K), gives 7.2e-4 at 870 kg/m³ (from
                                               memory)
STEEL_MODULUS          210e9       Pa          Young's modulus of carbon steel, 200–210 GPa
                                               (from memory)
STEEL_POISSON          0.30        -           Poisson's ratio of steel (from memory)
STEEL_EXPANSION        12e-6       1/K         linear expansion of carbon steel, 11–13e-6
                                               (from memory); a pipe's volume grows by 3α
=====================  ==========  ==========  ================================================

A higher bulk modulus is the conservative side for both the Joukowsky surge and the pressure
rise of a blocked-in volume; entrained air lowers the effective value a lot, so a measured or
stated value is better than the default.

References
----------
.. [1] A. Esposito, *Fluid Power with Applications*, 7th ed., Pearson (2009),
   ISBN 978-0-13-513690-4 (bulk modulus of hydraulic oil; from memory).
.. [2] API *Manual of Petroleum Measurement Standards*, Chapter 11.1 / ASTM D1250, volume
   correction for lubricating oils (the relation α = (K0 + K1·ρ15)/ρ15²; the constants from
   memory).
"""

from __future__ import annotations

__all__ = [
    "OIL_BULK_MODULUS",
    "OIL_DENSITY",
    "OIL_EXPANSION",
    "SOURCES",
    "STEEL_EXPANSION",
    "STEEL_MODULUS",
    "STEEL_POISSON",
]

#: Density of mineral hydraulic oil at 15 °C, [kg/m³] (from memory: 860–880).
OIL_DENSITY: float = 870.0
#: Isentropic bulk modulus of mineral hydraulic oil, [Pa] (from memory: 1.5–1.8 GPa).
OIL_BULK_MODULUS: float = 1.7e9
#: Volumetric thermal expansion coefficient of mineral hydraulic oil, [1/K] (from memory).
OIL_EXPANSION: float = 7.0e-4
#: Young's modulus of carbon steel, [Pa] (from memory: 200–210 GPa).
STEEL_MODULUS: float = 210e9
#: Poisson's ratio of steel, [-] (from memory).
STEEL_POISSON: float = 0.30
#: Linear thermal expansion coefficient of carbon steel, [1/K] (from memory: 11–13e-6).
STEEL_EXPANSION: float = 12e-6

#: One line per default, for reports and ``--json`` output.
SOURCES: dict[str, str] = {
    "oil_density": "870 kg/m³, mineral hydraulic oil ISO VG 32–68 at 15 °C (from memory)",
    "oil_bulk_modulus": "1.7 GPa, isentropic, mineral oil near 0 bar and 40 °C; typical "
    "1.5–1.8 GPa (from memory; Esposito uses 250 000 psi)",
    "oil_expansion": "7.0e-4 1/K, volumetric, mineral oil; API MPMS 11.1 / ASTM D1250 "
    "lubricating-oil relation gives 7.2e-4 at 870 kg/m³ (from memory)",
    "steel_modulus": "210 GPa, carbon steel (from memory)",
    "steel_expansion": "12e-6 1/K linear, carbon steel; volume 3α (from memory)",
}
