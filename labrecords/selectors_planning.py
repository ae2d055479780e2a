"""Reads for the engineer's planning screens: spec check, glass cautions, witness choice.

Each turns database rows into the plain values the pure computations take.
"""

from __future__ import annotations

from dataclasses import dataclass

from django.db.models import Sum

from durability.callouts import ParseOptions, ParseResult, parse_callouts
from durability.dispersion import GlassOptics, Sellmeier
from durability.glass_cautions import GlassCautions, GlassChemistry, glass_cautions
from durability.models import Glass, WitnessStock
from durability.speccheck import CoatingSpec as SpecValues
from durability.speccheck import SpecCheckResult, check_spec
from durability.witness import StockCandidate, WitnessChoice, rank_witness_glasses
from labrecords.models import CoatingSpec, Lot, PlanStatus, TestPlan


def _f(value) -> float | None:
    return float(value) if value is not None else None


def _laser(text: str) -> str:
    lowered = text.lower()
    if not lowered.strip():
        return "unknown"
    if "certif" in lowered:
        return "certification"
    if "threshold" in lowered:
        return "threshold"
    if lowered.strip() in {"none", "no", "not required", "n/a"}:
        return "none"
    return "unknown"


def spec_values(spec: CoatingSpec) -> SpecValues:
    lot = spec.lots.select_related("design").first()
    design = lot.design if lot else None
    return SpecValues(
        glass_name=spec.glass.name if spec.glass else None,
        glass_known=spec.glass is not None if spec.glass_id else None,
        wavelength_min_nm=_f(spec.wavelength_min_nm),
        wavelength_max_nm=_f(spec.wavelength_max_nm),
        requirement_kind=spec.quantity or None,
        limit_min_percent=_f(spec.limit_min_pct),
        limit_max_percent=_f(spec.limit_max_pct),
        limit_basis=spec.statistic or None,
        aoi_min_deg=_f(spec.aoi_min_deg),
        aoi_max_deg=_f(spec.aoi_max_deg),
        polarization=spec.polarization or None,
        clear_aperture=f"{spec.clear_aperture_mm} mm" if spec.clear_aperture_mm else None,
        sides_coated=spec.sides_coated,
        callout_text_present=bool(spec.callout_text.strip()),
        laser_damage=_laser(spec.laser_damage),
        laser_damage_detail=spec.laser_damage or None,
        witness_requirement=spec.witness_requirement or None,
        documentation=spec.documentation or None,
        marking=spec.marking or None,
        packaging=spec.packaging or None,
        design_n_eff=_f(design.n_eff) if design and design.n_eff else None,
        substrate_index=_f(spec.glass.n_d) if spec.glass else None,
        feature_wavelength_nm=_f(design.design_wavelength_nm) if design else None,
    )


def spec_check_for(spec: CoatingSpec, n_eff: float | None = None) -> SpecCheckResult:
    """The spec check; `n_eff` entered by the engineer wins over the design's."""
    return check_spec(spec_values(spec), n_eff=n_eff)


def glass_optics(glass: Glass) -> GlassOptics:
    sellmeier = None
    if glass.sellmeier_b and glass.sellmeier_c_um2:
        sellmeier = Sellmeier(
            b=tuple(glass.sellmeier_b),
            c_um2=tuple(glass.sellmeier_c_um2),
            source=f"{glass.name} data sheet",
        )
    return GlassOptics(
        name=glass.name, sellmeier=sellmeier, n_d=float(glass.n_d), v_d=float(glass.v_d)
    )


def glass_cautions_for(glass: Glass) -> GlassCautions:
    return glass_cautions(
        GlassChemistry(
            name=glass.name,
            acid_class=glass.acid_class or None,
            alkali_class=glass.alkali_class or None,
            phosphate_class=glass.phosphate_class or None,
            alpha_1e6_per_k=_f(glass.expansion_per_k_e6),
            supplier_climate_class=glass.climate_class or None,
            supplier_stain_class=glass.stain_class or None,
        )
    )


@dataclass(frozen=True)
class StockRow:
    stock: WitnessStock
    on_hand: int


def stock_on_hand() -> list[StockRow]:
    rows = WitnessStock.objects.select_related("glass").annotate(on_hand=Sum("movements__delta"))
    return [StockRow(stock=row, on_hand=row.on_hand or 0) for row in rows]


def witness_choice_for(spec: CoatingSpec) -> tuple[WitnessChoice | None, dict[str, StockRow]]:
    """Stock glasses ranked by index match to the spec's glass at the design wavelength (or
    over the spec's band when no design wavelength is known)."""
    stock = {str(row.stock.pk): row for row in stock_on_hand()}
    if spec.glass is None or not stock:
        return None, stock
    candidates = [
        StockCandidate(
            stock_id=key, glass=glass_optics(row.stock.glass), pieces_available=row.on_hand
        )
        for key, row in stock.items()
    ]
    lot = spec.lots.select_related("design").first()
    wavelength = (
        _f(lot.design.design_wavelength_nm) if lot and lot.design.design_wavelength_nm else None
    )
    if wavelength is not None:
        choice = rank_witness_glasses(
            glass_optics(spec.glass), candidates, wavelength_nm=wavelength
        )
    elif spec.wavelength_min_nm and spec.wavelength_max_nm:
        choice = rank_witness_glasses(
            glass_optics(spec.glass),
            candidates,
            band_nm=(float(spec.wavelength_min_nm), float(spec.wavelength_max_nm)),
        )
    else:
        choice = rank_witness_glasses(glass_optics(spec.glass), candidates, wavelength_nm=587.56)
    return choice, stock


def callouts_read(text: str, mil_basic: bool) -> ParseResult:
    return parse_callouts(text, ParseOptions(mil_48497_temperature_solvent_basic=mil_basic))


@dataclass(frozen=True)
class PlanView:
    plan: TestPlan
    sequences: list[dict]
    previous: list[TestPlan]


def lot_plan(lot: Lot) -> PlanView | None:
    """The lot's newest plan (draft or released) with its sequences, steps and pieces."""
    from durability.safety import cautions_for

    plans = list(
        lot.plans.select_related("created_by", "released_by", "supersedes").order_by("-number")
    )
    if not plans:
        return None
    plan = plans[0]
    sequences = []
    for sequence in plan.sequences.prefetch_related(
        "steps__method_version__method", "assignments__piece"
    ).order_by("position"):
        steps = sorted(sequence.steps.all(), key=lambda s: s.order)
        sequences.append(
            {
                "sequence": sequence,
                "pieces": [a.piece for a in sequence.assignments.all()],
                "steps": [
                    {"step": s, "cautions": cautions_for(s.hazards), "parameters": s.parameters}
                    for s in steps
                ],
            }
        )
    return PlanView(plan=plan, sequences=sequences, previous=plans[1:])


def is_released(plan: TestPlan) -> bool:
    return plan.status == PlanStatus.RELEASED
