"""Material tables: magnet grades, rotor disc materials, copper.

Every table says where its numbers come from. Values marked "from memory" are typical
handbook figures that could not be checked against the primary document here.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class MagnetGrade:
    name: str
    remanence_t: float  # typical Br at 20 °C
    max_temperature_c: float  # maximum working temperature of the grade
    br_temp_coeff_per_k: float  # reversible temperature coefficient of Br
    density_g_cm3: float
    br_range_t: tuple[float, float] = (0.0, 0.0)  # the grade's published Br span at 20 °C
    recoil_permeability: float = 1.05  # sintered NdFeB 1.03–1.10 (from memory)


# Sintered NdFeB: Br ranges per IEC 60404-8-1 grade classes and MMPA Standard 0100; the
# typical value is the middle of the published range (from memory). Temperature classes
# follow the usual letter suffixes (from memory): none 80 °C, M 100 °C, H 120 °C,
# SH 150 °C, UH 180 °C, EH 200 °C. Hard ferrite Y30-class Br ≈ 0.38–0.40 T (from memory).
_NDFEB_BR_RANGE_T = {
    "N35": (1.17, 1.22),
    "N38": (1.22, 1.26),
    "N40": (1.26, 1.29),
    "N42": (1.28, 1.32),
    "N45": (1.32, 1.38),
    "N48": (1.38, 1.42),
    "N50": (1.40, 1.45),
    "N52": (1.43, 1.48),
}
_NDFEB_TEMPERATURE_CLASS_C = {
    "": 80.0,
    "M": 100.0,
    "H": 120.0,
    "SH": 150.0,
    "UH": 180.0,
    "EH": 200.0,
}
NDFEB_DENSITY_G_CM3 = 7.5  # from memory
FERRITE_DENSITY_G_CM3 = 4.9  # from memory


def _build_grades() -> dict[str, MagnetGrade]:
    grades: dict[str, MagnetGrade] = {}
    for base, (lo, hi) in _NDFEB_BR_RANGE_T.items():
        for suffix, t_max in _NDFEB_TEMPERATURE_CLASS_C.items():
            name = base + suffix
            grades[name] = MagnetGrade(name, (lo + hi) / 2, t_max, -0.0012, NDFEB_DENSITY_G_CM3, (lo, hi))
    for name, (lo, hi) in (("Y30", (0.38, 0.40)), ("Y35", (0.40, 0.44))):
        # hard ferrite recoils at about 1.05–1.2 (from memory)
        grades[name] = MagnetGrade(name, (lo + hi) / 2, 250.0, -0.0020, FERRITE_DENSITY_G_CM3, (lo, hi), 1.1)
    return grades


MAGNET_GRADES: dict[str, MagnetGrade] = _build_grades()
GRADE_SOURCE = "IEC 60404-8-1 / MMPA 0100 typical Br (mid-range, from memory)"


@dataclass(frozen=True)
class DiscMaterial:
    name: str
    density_g_cm3: float
    strength_mpa: float  # yield (metals) or tensile strength (plastics, wood)
    poisson: float
    magnetic: bool  # soft magnetic: mirrors the magnets' field (method of images)
    printed: bool  # made on a 3-D printer (pocket clearance, softening)
    softening_c: float | None  # where a plastic starts to creep under load
    modulus_gpa: float = 200.0  # Young's modulus, for the disc's bending under the attraction


# Densities: common handbook values. Strengths: typical minimum values (from memory):
# S235 steel yield 235 MPa, 6061-T6 aluminium yield 240 MPa, printed PLA/PETG/ABS tensile
# about 50/45/35 MPa along the layers (much less across them), birch plywood ~40 MPa,
# cast acrylic ~65 MPa. Softening points of printed plastics: common practice. Young's
# moduli (from memory): steel 200 GPa, aluminium 69, printed PLA ~3.5, PETG ~2.0, ABS ~2.2
# (less across the layers), birch plywood ~8 along the face grain, acrylic ~3.2.
DISC_MATERIALS: dict[str, DiscMaterial] = {
    "steel": DiscMaterial("steel", 7.85, 235.0, 0.29, True, False, None, 200.0),
    "aluminium": DiscMaterial("aluminium", 2.70, 240.0, 0.33, False, False, None, 69.0),
    "pla": DiscMaterial("pla", 1.24, 50.0, 0.36, False, True, 55.0, 3.5),
    "petg": DiscMaterial("petg", 1.27, 45.0, 0.38, False, True, 80.0, 2.0),
    "abs": DiscMaterial("abs", 1.04, 35.0, 0.35, False, True, 100.0, 2.2),
    "plywood": DiscMaterial("plywood", 0.65, 40.0, 0.30, False, False, None, 8.0),
    "acrylic": DiscMaterial("acrylic", 1.18, 65.0, 0.37, False, False, None, 3.2),
}

# What holds the coils of the stator, and the temperature it takes. Printed formers soften
# (PLA 55–60 °C, PETG ~80 °C, ABS ~100 °C: common practice); a polyester or epoxy casting
# resin is usually rated around 80–100 °C continuous (from memory, check the resin's sheet).
STATOR_BINDERS_MAX_C: dict[str, float] = {
    "epoxy": 90.0,
    "polyester": 80.0,
    "pla": 55.0,
    "petg": 80.0,
    "abs": 100.0,
}
PRINTED_BINDERS = ("pla", "petg", "abs")  # printed as a frame with coil formers, not cast


def is_printed_binder(binder: str) -> bool:
    """Whether a stator of this binder is printed (a frame and formers) rather than cast."""
    return binder in PRINTED_BINDERS


EPOXY_DENSITY_G_CM3 = 1.15  # common handbook value
# Density of each binder where it is known: the printed ones are the disc plastics; a
# casting polyester varies too much with its filler to name one.
BINDER_DENSITY_G_CM3: dict[str, float] = {
    "epoxy": EPOXY_DENSITY_G_CM3,
    **{b: DISC_MATERIALS[b].density_g_cm3 for b in STATOR_BINDERS_MAX_C if b in DISC_MATERIALS},
}

# Plain (mild, low-carbon) steel plate as a solid conductor of flux, for the losses of a
# stationary plate under the moving magnets (layout.steel). Resistivity of low-carbon steel
# at room temperature is about 0.14–0.20 µΩ·m, so σ ≈ 5–7 MS/m; 6 MS/m is taken (from
# memory). The limiting theory replaces the B–H curve by a step at a saturation level
# B_s; for mild steel the knee lies about 1.5–1.8 T, 1.6 T is taken (from memory). Its
# coercivity, for the hysteresis part, about 100–300 A/m (from memory).
STEEL_CONDUCTIVITY_S_M = 6.0e6
STEEL_SATURATION_T = 1.6
STEEL_COERCIVITY_A_M = 200.0

# Annealed copper, IEC 60028: resistivity 1/58 Ω·mm²/m at 20 °C, temperature coefficient
# 0.00393 /K at 20 °C.
COPPER_RESISTIVITY_20C_OHM_MM2_PER_M = 1.0 / 58.0
COPPER_TEMP_COEFF_PER_K = 0.00393
COPPER_DENSITY_G_CM3 = 8.89  # IEC 60028 annealed copper


@dataclass(frozen=True)
class Thread:
    name: str
    diameter_mm: float  # nominal (major) diameter
    pitch_mm: float
    tap_drill_mm: float  # hole to tap the thread into
    clearance_mm: float  # hole the screw passes through


# ISO metric coarse threads: pitches per ISO 261, tap drill ≈ diameter − pitch (common
# practice), clearance holes of the medium series of ISO 273 (all from memory).
METRIC_THREADS: dict[str, Thread] = {
    t.name: t
    for t in (
        Thread("M5", 5.0, 0.8, 4.2, 5.5),
        Thread("M6", 6.0, 1.0, 5.0, 6.6),
        Thread("M8", 8.0, 1.25, 6.8, 9.0),
        Thread("M10", 10.0, 1.5, 8.5, 11.0),
        Thread("M12", 12.0, 1.75, 10.2, 13.5),
        Thread("M16", 16.0, 2.0, 14.0, 17.5),
    )
}
