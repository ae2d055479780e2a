"""Refractive index against wavelength for glasses: Sellmeier, and a model from n_d and V_d.

Sellmeier (shared/reference/computations.md, "Dispersion and witness glass"):

    n^2 - 1 = sum_i B_i * lam^2 / (lam^2 - C_i),  lam in micrometres, C_i in micrometres^2.

Catalogues print C_i in um^2 (Schott, for instance); papers often print the resonance
wavelengths sqrt(C_i) in um instead (Malitson 1965 does). Feeding sqrt(C_i) where C_i is
expected gives a plausible-looking but wrong index: the classic bug. `Sellmeier` always
holds C_i in um^2; build it with `Sellmeier.from_resonance_wavelengths` when the source
prints sqrt(C_i), and use `check_sellmeier_against_nd` to catch a mix-up.

When a glass has no Sellmeier coefficients, `AbbeModel` is a two-term Cauchy formula
n = A + B/lam^2 passed through n_d at the d line with n_F - n_C = (n_d - 1)/V_d. It is an
approximation with a stated valid band (400-1000 nm unless the caller sets another); the
model refuses wavelengths outside it unless asked to flag them instead.

Public wavelengths are in nanometres.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Literal, Protocol

import numpy as np
import numpy.typing as npt

from durability.errors import InputError

#: Fraunhofer lines used for V_d (computations.md): helium d, hydrogen F and C, in nm.
LINE_D_NM = 587.5618
LINE_F_NM = 486.1327
LINE_C_NM = 656.2725

ABBE_CONVENTION = (
    f"V_d = (n_d - 1)/(n_F - n_C) with d = {LINE_D_NM} nm, F = {LINE_F_NM} nm, C = {LINE_C_NM} nm"
)

#: Default valid band of the n_d/V_d model, a stated choice of this lab (common practice).
ABBE_MODEL_BAND_NM = (400.0, 1000.0)

OutsideBand = Literal["refuse", "flag"]
FloatArray = npt.NDArray[np.float64]


def _number(value: object, field_name: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{field_name}: expected a number, got {value!r}")
    result = float(value)
    if not math.isfinite(result):
        raise InputError(f"{field_name}: expected a finite number, got {value!r}")
    return result


def _wavelengths(values: Sequence[float] | FloatArray, field_name: str) -> FloatArray:
    try:
        array = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{field_name}: expected wavelengths in nm, got {values!r}") from exc
    if array.ndim != 1 or array.size == 0:
        raise InputError(f"{field_name}: expected a non-empty list of wavelengths in nm")
    if not np.all(np.isfinite(array)) or np.any(array <= 0):
        raise InputError(f"{field_name}: wavelengths must be finite and above 0 nm")
    return array


class DispersionModel(Protocol):
    """What the witness choice needs from any index model."""

    @property
    def kind(self) -> str: ...

    @property
    def valid_band_nm(self) -> tuple[float, float] | None: ...

    def describe(self) -> str: ...

    def indices(
        self, wavelengths_nm: Sequence[float] | FloatArray, outside: OutsideBand = "refuse"
    ) -> FloatArray: ...


def _check_band(
    model: DispersionModel, wavelengths: FloatArray, outside: OutsideBand, field_name: str
) -> None:
    if outside not in ("refuse", "flag"):
        raise InputError(f"outside: expected 'refuse' or 'flag', got {outside!r}")
    band = model.valid_band_nm
    if band is None or outside == "flag":
        return
    bad = wavelengths[(wavelengths < band[0]) | (wavelengths > band[1])]
    if bad.size:
        raise InputError(
            f"{field_name}: {bad[0]:g} nm is outside the valid band {band[0]:g}-{band[1]:g} nm "
            f"of {model.describe()}"
        )


def in_band(model: DispersionModel, wavelength_nm: float) -> bool:
    """True when the model states no band or the wavelength lies inside it."""
    band = model.valid_band_nm
    return band is None or band[0] <= wavelength_nm <= band[1]


# --- Sellmeier -------------------------------------------------------------------------------


@dataclass(frozen=True)
class Sellmeier:
    """Sellmeier coefficients with C_i in um^2 (NOT the resonance wavelengths sqrt(C_i))."""

    b: tuple[float, ...]
    c_um2: tuple[float, ...]
    valid_band_nm: tuple[float, float] | None = None
    source: str = ""
    kind: str = field(default="Sellmeier", init=False)

    def __post_init__(self) -> None:
        b = tuple(_number(v, f"Sellmeier B{i}") for i, v in enumerate(self.b, start=1))
        c = tuple(_number(v, f"Sellmeier C{i}") for i, v in enumerate(self.c_um2, start=1))
        if not b or len(b) != len(c):
            raise InputError(
                f"Sellmeier: need as many B as C coefficients (at least one), "
                f"got {len(b)} B and {len(c)} C"
            )
        for i, value in enumerate(c, start=1):
            if value < 0:
                raise InputError(f"Sellmeier C{i}: must not be negative (um^2), got {value:g}")
        object.__setattr__(self, "b", b)
        object.__setattr__(self, "c_um2", c)
        if self.valid_band_nm is not None:
            object.__setattr__(self, "valid_band_nm", _band(self.valid_band_nm, "Sellmeier band"))

    @classmethod
    def from_resonance_wavelengths(
        cls,
        b: Sequence[float],
        sqrt_c_um: Sequence[float],
        valid_band_nm: tuple[float, float] | None = None,
        source: str = "",
    ) -> Sellmeier:
        """Build from the sqrt(C_i) form (resonance wavelengths in um), as papers often print."""
        roots = [_number(v, f"Sellmeier sqrt(C{i})") for i, v in enumerate(sqrt_c_um, start=1)]
        return cls(tuple(b), tuple(r * r for r in roots), valid_band_nm, source)

    def describe(self) -> str:
        """One line naming the model, its band and source."""
        band = (
            f"{self.valid_band_nm[0]:g}-{self.valid_band_nm[1]:g} nm"
            if self.valid_band_nm
            else "valid band not given"
        )
        source = f", {self.source}" if self.source else ""
        return f"Sellmeier ({len(self.b)} terms, C in um^2; {band}{source})"

    def indices(
        self, wavelengths_nm: Sequence[float] | FloatArray, outside: OutsideBand = "refuse"
    ) -> FloatArray:
        """Refractive indices at the given wavelengths (nm)."""
        lam_nm = _wavelengths(wavelengths_nm, "wavelength_nm")
        _check_band(self, lam_nm, outside, "wavelength_nm")
        lam2 = (lam_nm / 1000.0) ** 2
        n2 = np.ones_like(lam2)
        for i, (b, c) in enumerate(zip(self.b, self.c_um2, strict=True), start=1):
            gap = lam2 - c
            if np.any(np.abs(gap) < 1e-12):
                raise InputError(
                    f"wavelength_nm: sits on the pole of Sellmeier term {i} "
                    f"(sqrt(C{i}) = {math.sqrt(c) * 1000:g} nm)"
                )
            n2 = n2 + b * lam2 / gap
        if np.any(n2 <= 0):
            bad = lam_nm[n2 <= 0][0]
            raise InputError(
                f"wavelength_nm: {bad:g} nm gives n^2 <= 0 in {self.describe()}; "
                "the formula does not apply there"
            )
        return np.sqrt(n2)

    def index(self, wavelength_nm: float, outside: OutsideBand = "refuse") -> float:
        """Refractive index at one wavelength (nm)."""
        return float(self.indices([_number(wavelength_nm, "wavelength_nm")], outside)[0])


def _band(band: object, field_name: str) -> tuple[float, float]:
    if not isinstance(band, tuple | list) or len(band) != 2:
        raise InputError(f"{field_name}: expected (from_nm, to_nm), got {band!r}")
    low = _number(band[0], f"{field_name} from")
    high = _number(band[1], f"{field_name} to")
    if not 0 < low < high:
        raise InputError(f"{field_name}: need 0 < from < to, got {low:g}-{high:g} nm")
    return (low, high)


# --- model from n_d and V_d ------------------------------------------------------------------


@dataclass(frozen=True)
class AbbeModel:
    """Two-term Cauchy n = A + B/lam^2 through n_d with n_F - n_C = (n_d - 1)/V_d.

    An approximation for glasses without Sellmeier data: built from fused silica's own n_d
    and V_d it stays within about 1.5e-3 of Malitson's Sellmeier over 400-1000 nm (largest
    at the red end), which is what the tests hold it to.
    """

    n_d: float
    v_d: float
    valid_band_nm: tuple[float, float] = ABBE_MODEL_BAND_NM
    kind: str = field(default="n_d/V_d model", init=False)

    def __post_init__(self) -> None:
        n_d = _number(self.n_d, "n_d")
        v_d = _number(self.v_d, "V_d")
        if n_d <= 1:
            raise InputError(f"n_d: must be above 1, got {n_d:g}")
        if v_d <= 0:
            raise InputError(f"V_d: must be above 0, got {v_d:g}")
        object.__setattr__(self, "n_d", n_d)
        object.__setattr__(self, "v_d", v_d)
        object.__setattr__(self, "valid_band_nm", _band(self.valid_band_nm, "model band"))

    @property
    def cauchy_b_nm2(self) -> float:
        """B in nm^2, from n_F - n_C = B (1/lam_F^2 - 1/lam_C^2)."""
        return ((self.n_d - 1) / self.v_d) / (LINE_F_NM**-2 - LINE_C_NM**-2)

    @property
    def cauchy_a(self) -> float:
        """A, so that the formula passes through n_d at the d line."""
        return self.n_d - self.cauchy_b_nm2 / LINE_D_NM**2

    def describe(self) -> str:
        """One line naming the model and its band."""
        low, high = self.valid_band_nm
        return (
            f"n_d/V_d model (two-term Cauchy through n_d = {self.n_d:g}, V_d = {self.v_d:g}; "
            f"valid {low:g}-{high:g} nm)"
        )

    def indices(
        self, wavelengths_nm: Sequence[float] | FloatArray, outside: OutsideBand = "refuse"
    ) -> FloatArray:
        """Refractive indices at the given wavelengths (nm)."""
        lam_nm = _wavelengths(wavelengths_nm, "wavelength_nm")
        _check_band(self, lam_nm, outside, "wavelength_nm")
        result: FloatArray = self.cauchy_a + self.cauchy_b_nm2 / lam_nm**2
        return result

    def index(self, wavelength_nm: float, outside: OutsideBand = "refuse") -> float:
        """Refractive index at one wavelength (nm)."""
        return float(self.indices([_number(wavelength_nm, "wavelength_nm")], outside)[0])


# --- glass optical data and the model it yields ----------------------------------------------


@dataclass(frozen=True)
class GlassOptics:
    """A glass's optical data: Sellmeier coefficients, or n_d and V_d, or both."""

    name: str
    sellmeier: Sellmeier | None = None
    n_d: float | None = None
    v_d: float | None = None


def dispersion_model(
    glass: GlassOptics, abbe_band_nm: tuple[float, float] = ABBE_MODEL_BAND_NM
) -> DispersionModel:
    """The model used for a glass: its Sellmeier formula when given, else the n_d/V_d model."""
    if glass.sellmeier is not None:
        return glass.sellmeier
    if glass.n_d is None or glass.v_d is None:
        raise InputError(f"glass {glass.name!r}: needs Sellmeier coefficients or both n_d and V_d")
    try:
        return AbbeModel(glass.n_d, glass.v_d, abbe_band_nm)
    except InputError as exc:
        raise InputError(f"glass {glass.name!r}: {exc}") from exc


@dataclass(frozen=True)
class IndexValue:
    """An index with the model it came from and whether the wavelength was in its band."""

    n: float
    wavelength_nm: float
    model: str
    in_valid_band: bool
    note: str | None


def index_at(
    model: DispersionModel, wavelength_nm: float, outside: OutsideBand = "refuse"
) -> IndexValue:
    """Index at one wavelength, naming its model; outside the band refuse or flag."""
    lam = _number(wavelength_nm, "wavelength_nm")
    n = float(model.indices([lam], outside)[0])
    inside = in_band(model, lam)
    note = None if inside else f"{lam:g} nm is outside the valid band of {model.describe()}"
    return IndexValue(n, lam, model.describe(), inside, note)


# --- Abbe number -----------------------------------------------------------------------------


@dataclass(frozen=True)
class AbbeResult:
    """V_d with the indices and line wavelengths it was computed from."""

    v_d: float
    n_d: float
    n_F: float
    n_C: float
    lines_nm: tuple[float, float, float]
    model: str
    convention: str


def abbe_number_from_indices(n_d: float, n_F: float, n_C: float) -> float:
    """V_d = (n_d - 1)/(n_F - n_C)."""
    nd = _number(n_d, "n_d")
    spread = _number(n_F, "n_F") - _number(n_C, "n_C")
    if spread <= 0:
        raise InputError(f"n_F - n_C must be above 0 (normal dispersion), got {spread:g}")
    return (nd - 1) / spread


def abbe_number(model: DispersionModel, outside: OutsideBand = "refuse") -> AbbeResult:
    """V_d of a dispersion model at the d, F and C lines."""
    n_d, n_f, n_c = (float(v) for v in model.indices([LINE_D_NM, LINE_F_NM, LINE_C_NM], outside))
    return AbbeResult(
        v_d=abbe_number_from_indices(n_d, n_f, n_c),
        n_d=n_d,
        n_F=n_f,
        n_C=n_c,
        lines_nm=(LINE_D_NM, LINE_F_NM, LINE_C_NM),
        model=model.describe(),
        convention=ABBE_CONVENTION,
    )


# --- catching the C / sqrt(C) mix-up ---------------------------------------------------------


@dataclass(frozen=True)
class SellmeierCheck:
    """Does a Sellmeier formula reproduce the catalogue n_d?"""

    agrees: bool
    n_d_catalogue: float
    n_d_formula: float
    difference: float
    tolerance: float
    message: str


def check_sellmeier_against_nd(
    sellmeier: Sellmeier, n_d: float, tolerance: float = 5e-4
) -> SellmeierCheck:
    """Compare the formula's index at the d line with the catalogue n_d.

    When they disagree, try the other reading of the C coefficients (squared, or square
    root) and say so if that one agrees: the usual cause is a C / sqrt(C) mix-up. The
    default tolerance of 5e-4 is a lab choice (common practice), not a catalogue figure.
    """
    nd = _number(n_d, "n_d")
    tol = _number(tolerance, "tolerance")
    formula = sellmeier.index(LINE_D_NM, outside="flag")
    difference = formula - nd
    if abs(difference) <= tol:
        message = f"formula gives n_d = {formula:.5f}, catalogue {nd:.5f}: agree within {tol:g}"
        return SellmeierCheck(True, nd, formula, difference, tol, message)
    message = f"formula gives n_d = {formula:.5f}, catalogue {nd:.5f}: differ by {difference:+.5f}"
    readings = {
        "the C values look like sqrt(C) (resonance wavelengths in um): square them": tuple(
            c * c for c in sellmeier.c_um2
        ),
        "the C values look squared twice: take their square roots": tuple(
            math.sqrt(c) for c in sellmeier.c_um2
        ),
    }
    for hint, c_values in readings.items():
        try:
            other = Sellmeier(sellmeier.b, c_values).index(LINE_D_NM, outside="flag")
        except InputError:
            continue
        if abs(other - nd) <= tol:
            message += f"; {hint} (that reading gives {other:.5f})"
            break
    return SellmeierCheck(False, nd, formula, difference, tol, message)
