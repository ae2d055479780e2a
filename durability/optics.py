"""Thin-film and surface optics for the spec check and the witness curves.

Textbook formulas (see shared/reference/computations.md, "Optics"):

- uncoated surface at normal incidence, R = ((n1 - n0)/(n1 + n0))^2;
- non-absorbing slab, incoherent, both surfaces: T = 2n/(n^2 + 1), R = (n - 1)^2/(n^2 + 1);
- Fresnel amplitudes at oblique incidence, total internal reflection included;
- single quarter-wave layer at its design wavelength;
- angle shift of an interference feature, lambda(theta) = lambda0*sqrt(1 - (n0 sin theta/n_eff)^2);
- the characteristic-matrix (transfer-matrix) method for a multilayer, s or p, any angle.

Units: wavelengths and thicknesses in nanometres, angles in degrees, reflectance and
transmittance as fractions (0..1). Complex indices are written N = n + ik with k >= 0 for an
absorbing medium (the sign convention of the reference library tmm). The p amplitude follows
r_p = (n cos(theta_i) - cos(theta_t))/(n cos(theta_i) + cos(theta_t)) as computations.md writes
it, so r_p = -r_s at normal incidence.
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

import numpy as np

from durability.errors import InputError

Polarization = Literal["s", "p"]

#: Beyond this angle the single-effective-index shift formula is only a rough estimate.
SHIFT_FORMULA_GOOD_TO_DEG = 30.0

SHIFT_FORMULA = "lambda(theta) = lambda0 * sqrt(1 - (n0 * sin(theta) / n_eff)^2)"
SHIFT_CAUTION = (
    "the single-effective-index shift formula is good to about 30°; "
    "beyond that treat the shift as a rough estimate"
)


def _real(value: object, field: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{field}: expected a number, got {value!r}")
    result = float(value)
    if not math.isfinite(result):
        raise InputError(f"{field}: expected a finite number, got {value!r}")
    return result


def _positive(value: object, field: str) -> float:
    result = _real(value, field)
    if result <= 0:
        raise InputError(f"{field}: must be greater than 0, got {result:g}")
    return result


def _index(value: object, field: str) -> float:
    result = _real(value, field)
    if result < 1.0:
        raise InputError(
            f"{field}: a refractive index below 1 is not accepted here, got {result:g}"
        )
    return result


def _complex_index(value: object, field: str) -> complex:
    if isinstance(value, bool) or not isinstance(value, int | float | complex):
        raise InputError(f"{field}: expected a refractive index (real or n+ik), got {value!r}")
    result = complex(value)
    if not (math.isfinite(result.real) and math.isfinite(result.imag)):
        raise InputError(f"{field}: expected a finite refractive index, got {value!r}")
    if result.real <= 0:
        raise InputError(f"{field}: the real part of the index must be above 0, got {result}")
    if result.imag < 0:
        raise InputError(
            f"{field}: write an absorbing index as n + ik with k >= 0 (got k = {result.imag:g}); "
            "gain media are not accepted"
        )
    return result


def _angle(value: object, field: str) -> float:
    result = _real(value, field)
    if not 0.0 <= result < 90.0:
        raise InputError(
            f"{field}: angle of incidence must be from 0 up to (not incl.) 90°, got {result:g}"
        )
    return result


# --- uncoated surfaces ----------------------------------------------------------------------


def surface_reflectance(n: float, n0: float = 1.0) -> float:
    """Reflectance of one uncoated, non-absorbing surface at normal incidence.

    R = ((n - n0)/(n + n0))^2; for glass of n = 1.5 in air this is 0.04.
    """
    n_sub = _index(n, "n")
    n_inc = _index(n0, "n0")
    return ((n_sub - n_inc) / (n_sub + n_inc)) ** 2


@dataclass(frozen=True)
class SlabResult:
    """Incoherent transmittance and reflectance of an uncoated, non-absorbing slab in air."""

    n: float
    transmittance: float
    reflectance: float
    single_surface_reflectance: float
    convention: str


def slab_incoherent(n: float) -> SlabResult:
    """Uncoated non-absorbing slab in air, both surfaces, multiple reflections added incoherently.

    T = 2n/(n^2 + 1) and R = (n - 1)^2/(n^2 + 1), so that R + T = 1.
    """
    n_sub = _index(n, "n")
    return SlabResult(
        n=n_sub,
        transmittance=2 * n_sub / (n_sub**2 + 1),
        reflectance=(n_sub - 1) ** 2 / (n_sub**2 + 1),
        single_surface_reflectance=((n_sub - 1) / (n_sub + 1)) ** 2,
        convention="normal incidence, no absorption, reflections between the faces added in power",
    )


# --- Fresnel ---------------------------------------------------------------------------------


@dataclass(frozen=True)
class FresnelResult:
    """Amplitudes and reflectances at one interface from medium n1 into medium n2."""

    n1: float
    n2: float
    angle_deg: float
    r_s: complex
    r_p: complex
    R_s: float
    R_p: float
    #: Refraction angle in medium 2; None under total internal reflection.
    refraction_angle_deg: float | None
    total_internal_reflection: bool
    convention: str

    @property
    def R_unpolarized(self) -> float:
        """Mean of R_s and R_p (unpolarized or randomly polarized light)."""
        return (self.R_s + self.R_p) / 2


FRESNEL_CONVENTION = (
    "r_s = (n1 cos ti - n2 cos tt)/(n1 cos ti + n2 cos tt), "
    "r_p = (n2 cos ti - n1 cos tt)/(n2 cos ti + n1 cos tt); "
    "under total internal reflection cos tt is imaginary and |r| = 1"
)


def fresnel(n1: float, n2: float, angle_deg: float) -> FresnelResult:
    """Fresnel amplitudes and reflectances for light going from index n1 into index n2.

    Both media are non-absorbing. When n1 sin(angle) > n2 the light is totally internally
    reflected: R_s = R_p = 1 and the amplitudes carry the phase of the evanescent wave.
    """
    n_i = _positive(n1, "n1")
    n_f = _positive(n2, "n2")
    theta = math.radians(_angle(angle_deg, "angle_deg"))
    cos_i = math.cos(theta)
    sin_t = n_i * math.sin(theta) / n_f
    tir = sin_t > 1.0
    # Decaying branch of the evanescent wave for the exp(-i omega t) convention (as tmm).
    cos_t: complex = 1j * math.sqrt(sin_t**2 - 1) if tir else complex(math.sqrt(1 - sin_t**2))
    r_s = (n_i * cos_i - n_f * cos_t) / (n_i * cos_i + n_f * cos_t)
    r_p = (n_f * cos_i - n_i * cos_t) / (n_f * cos_i + n_i * cos_t)
    return FresnelResult(
        n1=n_i,
        n2=n_f,
        angle_deg=float(angle_deg),
        r_s=complex(r_s),
        r_p=complex(r_p),
        R_s=min(abs(r_s) ** 2, 1.0),
        R_p=min(abs(r_p) ** 2, 1.0),
        refraction_angle_deg=None if tir else math.degrees(math.asin(sin_t)),
        total_internal_reflection=tir,
        convention=FRESNEL_CONVENTION,
    )


def brewster_angle_deg(n1: float, n2: float) -> float:
    """Brewster angle (R_p = 0) for light going from n1 into n2: atan(n2/n1), in degrees."""
    return math.degrees(math.atan2(_positive(n2, "n2"), _positive(n1, "n1")))


def critical_angle_deg(n1: float, n2: float) -> float | None:
    """Angle of total internal reflection from n1 into n2 in degrees; None when n1 <= n2."""
    n_i = _positive(n1, "n1")
    n_f = _positive(n2, "n2")
    if n_i <= n_f:
        return None
    return math.degrees(math.asin(n_f / n_i))


# --- single quarter-wave layer ---------------------------------------------------------------


@dataclass(frozen=True)
class QuarterWaveResult:
    """A single quarter-wave layer at its design wavelength, normal incidence."""

    n_layer: float
    n_substrate: float
    n0: float
    wavelength_nm: float
    reflectance: float
    physical_thickness_nm: float
    formula: str


def quarter_wave_layer(
    n_layer: float, n_substrate: float, wavelength_nm: float, n0: float = 1.0
) -> QuarterWaveResult:
    """Reflectance and physical thickness of one quarter-wave layer at its design wavelength.

    R = ((n0*ns - n1^2)/(n0*ns + n1^2))^2 and d = lambda0/(4*n1). MgF2 (1.38) on glass of
    1.52 gives about 1.26 %.
    """
    n1 = _index(n_layer, "n_layer")
    ns = _index(n_substrate, "n_substrate")
    ni = _index(n0, "n0")
    lam = _positive(wavelength_nm, "wavelength_nm")
    return QuarterWaveResult(
        n_layer=n1,
        n_substrate=ns,
        n0=ni,
        wavelength_nm=lam,
        reflectance=((ni * ns - n1**2) / (ni * ns + n1**2)) ** 2,
        physical_thickness_nm=lam / (4 * n1),
        formula="R = ((n0*ns - n1^2)/(n0*ns + n1^2))^2, d = lambda0/(4*n1)",
    )


# --- angle shift of an interference feature --------------------------------------------------


@dataclass(frozen=True)
class AngleShift:
    """Where a feature designed at normal incidence sits at one angle of incidence."""

    wavelength0_nm: float
    angle_deg: float
    wavelength_nm: float
    shift_nm: float
    n_eff: float
    n0: float
    formula: str
    assumption: str
    caution: str | None


@dataclass(frozen=True)
class AngleRangeShift:
    """Where a feature sits at the two ends of an angle range, and the spread between them."""

    wavelength0_nm: float
    angle_min_deg: float
    angle_max_deg: float
    wavelength_at_min_nm: float
    wavelength_at_max_nm: float
    #: wavelength_at_max_nm - wavelength_at_min_nm; negative because features move to
    #: shorter wavelengths as the angle grows.
    shift_nm: float
    n_eff: float
    n0: float
    formula: str
    assumption: str
    caution: str | None


def _shifted(wavelength0_nm: float, angle_deg: float, n_eff: float, n0: float) -> float:
    ratio = n0 * math.sin(math.radians(angle_deg)) / n_eff
    if ratio >= 1.0:
        raise InputError(
            f"n_eff: must exceed n0*sin(angle) = {n0 * math.sin(math.radians(angle_deg)):.4f} "
            f"at {angle_deg:g}°, got n_eff = {n_eff:g}"
        )
    return wavelength0_nm * math.sqrt(1.0 - ratio**2)


def _assumption(n_eff: float, n_eff_source: str) -> str:
    return (
        f"effective index n_eff = {n_eff:g} ({n_eff_source}); the shift scales with 1/n_eff^2, "
        "so a different n_eff changes it"
    )


def feature_shift(
    wavelength0_nm: float,
    angle_deg: float,
    n_eff: float,
    n0: float = 1.0,
    n_eff_source: str = "entered by the engineer",
) -> AngleShift:
    """Wavelength of an interference feature (edge, band, minimum) at an angle of incidence.

    `wavelength0_nm` is where the feature sits at normal incidence. The result carries the
    n_eff assumption and, above 30°, the caution that the formula is good to about 30°.
    """
    lam0 = _positive(wavelength0_nm, "wavelength0_nm")
    theta = _angle(angle_deg, "angle_deg")
    neff = _positive(n_eff, "n_eff")
    ni = _index(n0, "n0")
    lam = _shifted(lam0, theta, neff, ni)
    return AngleShift(
        wavelength0_nm=lam0,
        angle_deg=theta,
        wavelength_nm=lam,
        shift_nm=lam - lam0,
        n_eff=neff,
        n0=ni,
        formula=SHIFT_FORMULA,
        assumption=_assumption(neff, n_eff_source),
        caution=SHIFT_CAUTION if theta > SHIFT_FORMULA_GOOD_TO_DEG else None,
    )


def shift_over_angle_range(
    wavelength0_nm: float,
    angle_min_deg: float,
    angle_max_deg: float,
    n_eff: float,
    n0: float = 1.0,
    n_eff_source: str = "entered by the engineer",
) -> AngleRangeShift:
    """Spread of an edge or band over an angle-of-incidence range (min..max).

    `wavelength0_nm` is the feature's wavelength at normal incidence. The feature moves
    monotonically to shorter wavelengths with angle, so the two ends bound it.
    """
    lam0 = _positive(wavelength0_nm, "wavelength0_nm")
    low = _angle(angle_min_deg, "angle_min_deg")
    high = _angle(angle_max_deg, "angle_max_deg")
    if low > high:
        raise InputError(f"angle_min_deg ({low:g}°) is above angle_max_deg ({high:g}°)")
    neff = _positive(n_eff, "n_eff")
    ni = _index(n0, "n0")
    at_min = _shifted(lam0, low, neff, ni)
    at_max = _shifted(lam0, high, neff, ni)
    return AngleRangeShift(
        wavelength0_nm=lam0,
        angle_min_deg=low,
        angle_max_deg=high,
        wavelength_at_min_nm=at_min,
        wavelength_at_max_nm=at_max,
        shift_nm=at_max - at_min,
        n_eff=neff,
        n0=ni,
        formula=SHIFT_FORMULA,
        assumption=_assumption(neff, n_eff_source),
        caution=SHIFT_CAUTION if high > SHIFT_FORMULA_GOOD_TO_DEG else None,
    )


# --- multilayer by the characteristic matrix -------------------------------------------------


@dataclass(frozen=True)
class Layer:
    """One thin film: its (possibly complex, n + ik) index and physical thickness in nm."""

    n: complex
    thickness_nm: float


@dataclass(frozen=True)
class MultilayerResult:
    """Reflectance, transmittance and reflection amplitude of a coherent multilayer."""

    polarization: Polarization
    wavelength_nm: float
    angle_deg: float
    R: float
    T: float
    #: Reflection amplitude; p uses the sign convention of `fresnel` (r_p = -r_s at 0°).
    r: complex
    #: 1 - R - T: power absorbed in the films (and exit medium losses are not included).
    absorptance: float
    convention: str


MULTILAYER_CONVENTION = (
    "characteristic-matrix method, coherent films between semi-infinite incident and exit "
    "media; indices n + ik (k >= 0 absorbs); tilted admittances n cos(theta) for s and "
    "n/cos(theta) for p; r_p = -r_s at normal incidence"
)


def _forward_cos(n: complex, n0_sin: complex) -> complex:
    """cos(theta) in a medium, on the branch of the wave travelling into the stack."""
    cos_t = cmath.sqrt(1 - (n0_sin / n) ** 2)
    q = n * cos_t
    # Forward wave: decays (Im q > 0) in the exp(-i omega t) convention, else Re q > 0.
    tiny = 100 * np.finfo(float).eps
    forward = q.imag > 0 if abs(q.imag) > tiny else q.real > 0
    cos_t = cos_t if forward else -cos_t
    # At exactly grazing propagation the p admittance n/cos is infinite; the characteristic
    # matrix is continuous there, so step a hair off the singular point.
    if abs(cos_t) < 1e-12:
        cos_t = complex(1e-12)
    return cos_t


def multilayer(
    n_incident: float,
    layers: Sequence[Layer],
    n_exit: complex,
    wavelength_nm: float,
    angle_deg: float,
    polarization: Polarization,
) -> MultilayerResult:
    """Coherent multilayer reflectance and transmittance by the characteristic-matrix method.

    Light comes from the non-absorbing medium `n_incident` at `angle_deg`, passes the films in
    `layers` (first is the one it meets first) and exits into `n_exit` (the substrate, taken as
    semi-infinite: its back surface is not included). An empty `layers` gives the bare interface.
    """
    if polarization not in ("s", "p"):
        raise InputError(f"polarization: expected 's' or 'p', got {polarization!r}")
    n0 = _index(n_incident, "n_incident")
    ns = _complex_index(n_exit, "n_exit")
    lam = _positive(wavelength_nm, "wavelength_nm")
    theta = _angle(angle_deg, "angle_deg")
    films: list[tuple[complex, float]] = []
    for i, layer in enumerate(layers, start=1):
        if not isinstance(layer, Layer):
            raise InputError(f"layers item {i}: expected a Layer(n, thickness_nm), got {layer!r}")
        n_j = _complex_index(layer.n, f"layers item {i} n")
        d_j = _real(layer.thickness_nm, f"layers item {i} thickness_nm")
        if d_j < 0:
            raise InputError(f"layers item {i} thickness_nm: must not be negative, got {d_j:g}")
        films.append((n_j, d_j))

    n0_sin = complex(n0 * math.sin(math.radians(theta)))

    def admittance(n: complex, cos_t: complex) -> complex:
        return n * cos_t if polarization == "s" else n / cos_t

    eta0 = admittance(complex(n0), complex(math.cos(math.radians(theta))))
    eta_s = admittance(ns, _forward_cos(ns, n0_sin))
    # [B, C] = prod(M_j) [1, eta_s]; for the exp(-i omega t) convention
    # M_j = [[cos d, -i sin d/eta], [-i eta sin d, cos d]].
    matrix = np.identity(2, dtype=complex)
    for n_j, d_j in films:
        cos_j = _forward_cos(n_j, n0_sin)
        eta_j = admittance(n_j, cos_j)
        delta = 2 * math.pi * n_j * cos_j * d_j / lam
        c, s = cmath.cos(delta), cmath.sin(delta)
        matrix = matrix @ np.array([[c, -1j * s / eta_j], [-1j * eta_j * s, c]])
    b, c_ = matrix @ np.array([1.0, eta_s])
    denominator = eta0 * b + c_
    r = (eta0 * b - c_) / denominator
    if polarization == "p":
        r = -r
    reflectance = float(abs(r) ** 2)
    transmittance = float(4 * eta0.real * eta_s.real / abs(denominator) ** 2)
    return MultilayerResult(
        polarization=polarization,
        wavelength_nm=lam,
        angle_deg=theta,
        R=reflectance,
        T=transmittance,
        r=complex(r),
        absorptance=1.0 - reflectance - transmittance,
        convention=MULTILAYER_CONVENTION,
    )


def multilayer_unpolarized(
    n_incident: float,
    layers: Sequence[Layer],
    n_exit: complex,
    wavelength_nm: float,
    angle_deg: float,
) -> tuple[float, float]:
    """(R, T) for unpolarized light: the mean of the s and p results."""
    s = multilayer(n_incident, layers, n_exit, wavelength_nm, angle_deg, "s")
    p = multilayer(n_incident, layers, n_exit, wavelength_nm, angle_deg, "p")
    return (s.R + p.R) / 2, (s.T + p.T) / 2
