"""Witness piece glass: rank stock glasses against the substrate, and take pieces from stock.

Rule [practice, shared/reference/computations.md "Dispersion and witness glass"]: the best
witness glass has the smallest |n_witness(lam) - n_substrate(lam)| at the design wavelength;
for a band, the smallest maximum |dn| over the band; ties are broken by |dV_d|. Each index
names the model it came from (the glass's Sellmeier formula, or the n_d/V_d model with its
band), because an index from the approximate model is less certain than a Sellmeier one.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np

from durability.dispersion import (
    ABBE_MODEL_BAND_NM,
    DispersionModel,
    GlassOptics,
    OutsideBand,
    abbe_number,
    dispersion_model,
)
from durability.errors import InputError

__all__ = [
    "Allocation",
    "StockCandidate",
    "StockCount",
    "StockTake",
    "WitnessChoice",
    "WitnessRank",
    "allocate_witness_pieces",
    "rank_witness_glasses",
]


@dataclass(frozen=True)
class StockCandidate:
    """One witness stock entry: its id, its glass and how many uncoated pieces are on the shelf."""

    stock_id: str
    glass: GlassOptics
    pieces_available: int


@dataclass(frozen=True)
class WitnessRank:
    """One candidate's place in the ranking, with the numbers behind it."""

    rank: int
    stock_id: str
    glass_name: str
    #: Largest |n_witness - n_substrate| over the design wavelength(s).
    abs_delta_n: float
    #: n_witness - n_substrate at the wavelength where |dn| is largest.
    delta_n: float
    worst_wavelength_nm: float
    n_witness: float
    n_substrate: float
    #: V_d(witness) - V_d(substrate); None when a V_d could not be had.
    delta_v: float | None
    witness_model: str
    substrate_model: str
    pieces_available: int
    #: Out-of-band flags and similar remarks.
    notes: tuple[str, ...]


@dataclass(frozen=True)
class WitnessChoice:
    """The ranked candidates, best first, and how they were compared."""

    substrate: str
    substrate_model: str
    design: str
    ranking: tuple[WitnessRank, ...]
    convention: str

    @property
    def best(self) -> WitnessRank | None:
        """The best-ranked candidate, or None with no candidates."""
        return self.ranking[0] if self.ranking else None


def _positive(value: object, field: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{field}: expected a number, got {value!r}")
    result = float(value)
    if not math.isfinite(result) or result <= 0:
        raise InputError(f"{field}: must be a finite number above 0, got {value!r}")
    return result


def _count(value: object, field: str) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or value < 0:
        raise InputError(f"{field}: expected a whole number of pieces (0 or more), got {value!r}")
    return value


def _design_grid(
    wavelength_nm: float | None, band_nm: tuple[float, float] | None, step_nm: float
) -> tuple[np.ndarray, str]:
    if (wavelength_nm is None) == (band_nm is None):
        raise InputError("give either wavelength_nm (one design wavelength) or band_nm, not both")
    if wavelength_nm is not None:
        lam = _positive(wavelength_nm, "wavelength_nm")
        return np.array([lam]), f"at {lam:g} nm"
    assert band_nm is not None
    if not isinstance(band_nm, tuple | list) or len(band_nm) != 2:
        raise InputError(f"band_nm: expected (from_nm, to_nm), got {band_nm!r}")
    low = _positive(band_nm[0], "band_nm from")
    high = _positive(band_nm[1], "band_nm to")
    if low >= high:
        raise InputError(f"band_nm: from ({low:g} nm) must be below to ({high:g} nm)")
    step = _positive(step_nm, "band_step_nm")
    count = max(int(math.ceil((high - low) / step)), 1) + 1
    return np.linspace(low, high, count), f"over {low:g}-{high:g} nm (every {step:g} nm or finer)"


def _out_of_band_note(model: DispersionModel, grid: np.ndarray, who: str) -> str | None:
    band = model.valid_band_nm
    if band is None:
        return None
    outside = grid[(grid < band[0]) | (grid > band[1])]
    if outside.size == 0:
        return None
    return (
        f"{who}: {outside.min():g}-{outside.max():g} nm lies outside the valid band "
        f"{band[0]:g}-{band[1]:g} nm of its model; index extrapolated"
    )


def _v_d(glass: GlassOptics, model: DispersionModel) -> float | None:
    if glass.v_d is not None:
        return float(glass.v_d)
    try:
        return abbe_number(model, outside="flag").v_d
    except InputError:
        return None


def _indices(
    model: DispersionModel, grid: np.ndarray, outside: OutsideBand, who: str
) -> np.ndarray:
    try:
        return model.indices(grid, outside)
    except InputError as exc:
        raise InputError(f"{who}: {exc}") from exc


def rank_witness_glasses(
    substrate: GlassOptics,
    candidates: Sequence[StockCandidate],
    *,
    wavelength_nm: float | None = None,
    band_nm: tuple[float, float] | None = None,
    band_step_nm: float = 1.0,
    tie_tolerance: float = 1e-4,
    abbe_band_nm: tuple[float, float] = ABBE_MODEL_BAND_NM,
    outside: OutsideBand = "flag",
) -> WitnessChoice:
    """Rank witness stock glasses by how closely their index follows the substrate's.

    Give either `wavelength_nm` or `band_nm`. Over a band, indices are sampled from one end
    to the other (both included) at `band_step_nm` or finer and the largest |dn| counts.
    |dn| values are compared in steps of `tie_tolerance` (default 1e-4, a lab choice); equal
    steps are ties, broken by the smaller |dV_d|, then the smaller |dn|. Candidates with no
    pieces on the shelf are ranked too (their count shows 0). Wavelengths outside a model's
    valid band are flagged in the row's notes (`outside="flag"`) or refused.
    """
    grid, design = _design_grid(wavelength_nm, band_nm, band_step_nm)
    tolerance = _positive(tie_tolerance, "tie_tolerance")
    substrate_model = dispersion_model(substrate, abbe_band_nm)
    who = f"substrate {substrate.name!r}"
    n_sub = _indices(substrate_model, grid, outside, who)
    substrate_note = _out_of_band_note(substrate_model, grid, who)
    v_sub = _v_d(substrate, substrate_model)

    seen: set[str] = set()
    rows: list[tuple[tuple[float, float, float, str], WitnessRank]] = []
    for i, candidate in enumerate(candidates, start=1):
        if not isinstance(candidate, StockCandidate):
            raise InputError(f"candidates item {i}: expected a StockCandidate, got {candidate!r}")
        where = f"candidates item {i} ({candidate.stock_id!r})"
        if not isinstance(candidate.stock_id, str) or not candidate.stock_id.strip():
            raise InputError(f"candidates item {i}: stock_id must be a non-empty text")
        if candidate.stock_id in seen:
            raise InputError(f"{where}: stock_id appears twice")
        seen.add(candidate.stock_id)
        pieces = _count(candidate.pieces_available, f"{where} pieces_available")
        try:
            model = dispersion_model(candidate.glass, abbe_band_nm)
        except InputError as exc:
            raise InputError(f"{where}: {exc}") from exc
        n_wit = _indices(model, grid, outside, where)
        diff = n_wit - n_sub
        worst = int(np.argmax(np.abs(diff)))
        abs_dn = float(abs(diff[worst]))
        v_wit = _v_d(candidate.glass, model)
        delta_v = None if v_wit is None or v_sub is None else v_wit - v_sub
        notes = [
            note
            for note in (substrate_note, _out_of_band_note(model, grid, "witness glass"))
            if note
        ]
        if delta_v is None:
            notes.append("no V_d available: ranked after candidates with one on a tie")
        row = WitnessRank(
            rank=0,
            stock_id=candidate.stock_id,
            glass_name=candidate.glass.name,
            abs_delta_n=abs_dn,
            delta_n=float(diff[worst]),
            worst_wavelength_nm=float(grid[worst]),
            n_witness=float(n_wit[worst]),
            n_substrate=float(n_sub[worst]),
            delta_v=delta_v,
            witness_model=model.describe(),
            substrate_model=substrate_model.describe(),
            pieces_available=pieces,
            notes=tuple(notes),
        )
        step = math.floor(abs_dn / tolerance + 0.5)
        key = (float(step), math.inf if delta_v is None else abs(delta_v), abs_dn, row.stock_id)
        rows.append((key, row))

    rows.sort(key=lambda item: item[0])
    ranking = tuple(replace(row, rank=place) for place, (_, row) in enumerate(rows, start=1))
    convention = (
        "smallest |n_witness - n_substrate| "
        + ("at the design wavelength" if band_nm is None else "maximum over the band")
        + f"; |dn| compared in steps of {tolerance:g}, ties broken by |dV_d| "
        "(common practice, computations.md)"
    )
    return WitnessChoice(
        substrate=substrate.name,
        substrate_model=substrate_model.describe(),
        design=design,
        ranking=ranking,
        convention=convention,
    )


# --- taking pieces from stock ----------------------------------------------------------------


@dataclass(frozen=True)
class StockCount:
    """Pieces on the shelf for one stock entry."""

    stock_id: str
    glass_name: str
    pieces_available: int


@dataclass(frozen=True)
class StockTake:
    """Pieces to take from one stock entry."""

    stock_id: str
    glass_name: str
    pieces: int


@dataclass(frozen=True)
class Allocation:
    """Which stock to take for a plan, and how many pieces are short."""

    needed: int
    takes: tuple[StockTake, ...]
    short: int
    message: str
    convention: str


def stock_counts(choice: WitnessChoice) -> list[StockCount]:
    """The ranking as stock counts, best-matched first, ready for `allocate_witness_pieces`."""
    return [StockCount(r.stock_id, r.glass_name, r.pieces_available) for r in choice.ranking]


def allocate_witness_pieces(
    needed: int, stock: Sequence[StockCount], *, one_glass: bool = True
) -> Allocation:
    """Say which stock entries to take a plan's witness pieces from, and what is short.

    `stock` is in order of preference (best-matched glass first, e.g. `stock_counts(choice)`).
    With `one_glass` (the default; common practice, so that a lot's pieces are comparable) all
    pieces come from one glass: the first glass whose entries together cover the need; when
    none does, the first glass that has any pieces, and the rest is short. Without it, pieces
    are taken in order of preference until the need is met.
    """
    need = _count(needed, "needed")
    entries: list[StockCount] = []
    seen: set[str] = set()
    for i, item in enumerate(stock, start=1):
        if not isinstance(item, StockCount):
            raise InputError(f"stock item {i}: expected a StockCount, got {item!r}")
        if item.stock_id in seen:
            raise InputError(f"stock item {i} ({item.stock_id!r}): stock_id appears twice")
        seen.add(item.stock_id)
        _count(item.pieces_available, f"stock item {i} ({item.stock_id!r}) pieces_available")
        entries.append(item)

    skipped: list[str] = []
    if one_glass:
        convention = (
            "all pieces of one glass: the first glass in order of preference that covers the need"
        )
        glasses: dict[str, list[StockCount]] = {}
        for item in entries:
            glasses.setdefault(item.glass_name, []).append(item)
        totals = {name: sum(e.pieces_available for e in items) for name, items in glasses.items()}
        chosen = next((name for name in glasses if totals[name] >= need), None)
        if chosen is None:
            chosen = next((name for name in glasses if totals[name] > 0), None)
        pool = glasses[chosen] if chosen is not None else []
        names = list(glasses)
        chosen_at = names.index(chosen) if chosen is not None else 0
        skipped = [f"{name} ({totals[name]} pieces)" for name in names[:chosen_at] if totals[name]]
    else:
        convention = "pieces taken in order of preference, glasses may be mixed"
        pool = entries

    takes: list[StockTake] = []
    remaining = need
    for item in pool:
        if remaining == 0:
            break
        pieces = min(item.pieces_available, remaining)
        if pieces:
            takes.append(StockTake(item.stock_id, item.glass_name, pieces))
            remaining -= pieces

    if need == 0:
        message = "no witness pieces needed"
    elif remaining == 0:
        listed = ", ".join(f"{t.pieces} from {t.stock_id} ({t.glass_name})" for t in takes)
        message = f"take {listed}"
        if skipped:
            message += "; better-matched glass with too few pieces: " + ", ".join(skipped)
    elif not takes:
        message = f"no witness pieces in stock: {need} short"
    else:
        listed = ", ".join(f"{t.pieces} from {t.stock_id} ({t.glass_name})" for t in takes)
        message = f"take {listed}; {remaining} short"
        if one_glass and sum(e.pieces_available for e in entries) >= need:
            message += " (mixing glasses would cover the need)"
    return Allocation(
        needed=need, takes=tuple(takes), short=remaining, message=message, convention=convention
    )
