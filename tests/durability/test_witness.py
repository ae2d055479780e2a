"""Checks of durability.witness: ranking by the computations.md rule on invented stock."""

from __future__ import annotations

import numpy as np
import pytest

from durability.dispersion import LINE_C_NM, LINE_D_NM, LINE_F_NM, GlassOptics, Sellmeier
from durability.errors import InputError
from durability.witness import (
    StockCandidate,
    StockCount,
    allocate_witness_pieces,
    rank_witness_glasses,
    stock_counts,
)

# Invented glasses (demo data); only the silica Sellmeier is published (Malitson 1965,
# computations.md [pub]).
SUBSTRATE = GlassOptics("Crown K-1 (invented)", n_d=1.5168, v_d=64.2)
SILICA = Sellmeier.from_resonance_wavelengths(
    (0.6961663, 0.4079426, 0.8974794), (0.0684043, 0.1162414, 9.896161), (210.0, 3710.0)
)


def _cauchy(n_d: float, v_d: float, lam: np.ndarray) -> np.ndarray:
    """Independent hand evaluation of the two-term model: n = A + B/lam^2 through n_d with
    n_F - n_C = (n_d - 1)/V_d (computations.md V_d definition [pub], lines in nm)."""
    b = (n_d - 1) / v_d / (1 / LINE_F_NM**2 - 1 / LINE_C_NM**2)
    return n_d - b / LINE_D_NM**2 + b / lam**2


def _stock(*items: tuple[str, float, float, int]) -> list[StockCandidate]:
    return [
        StockCandidate(stock_id, GlassOptics(f"glass {stock_id}", n_d=n, v_d=v), pieces)
        for stock_id, n, v, pieces in items
    ]


def test_it_ranks_by_index_difference_at_the_design_wavelength():
    # rule: smallest |n_w - n_s| at the design wavelength [practice, computations.md]
    stock = _stock(("W-A", 1.5170, 40.0, 10), ("W-B", 1.5185, 64.2, 10), ("W-C", 1.5230, 60, 3))
    lam = np.array([550.0])
    expected = {
        c.stock_id: abs(_cauchy(c.glass.n_d, c.glass.v_d, lam) - _cauchy(1.5168, 64.2, lam))[0]
        for c in stock
    }
    choice = rank_witness_glasses(SUBSTRATE, stock, wavelength_nm=550.0)
    assert [r.stock_id for r in choice.ranking] == sorted(expected, key=expected.get)
    for row in choice.ranking:
        assert row.abs_delta_n == pytest.approx(expected[row.stock_id], rel=1e-9)
        assert row.witness_model.startswith("n_d/V_d model")
    assert [r.rank for r in choice.ranking] == [1, 2, 3]
    assert choice.best is not None and choice.best.stock_id == "W-A"


def test_dispersion_can_change_the_choice_in_the_blue():
    # same rule at 400 nm: W-A's low V_d (strong dispersion) now costs it the first place;
    # indices checked by hand with the two-term model
    stock = _stock(("W-A", 1.5170, 40.0, 10), ("W-B", 1.5185, 64.2, 10))
    lam = np.array([400.0])
    d_a = abs(_cauchy(1.5170, 40.0, lam) - _cauchy(1.5168, 64.2, lam))[0]
    d_b = abs(_cauchy(1.5185, 64.2, lam) - _cauchy(1.5168, 64.2, lam))[0]
    assert d_b < d_a  # the premise of this test
    choice = rank_witness_glasses(SUBSTRATE, stock, wavelength_nm=400.0)
    assert [r.stock_id for r in choice.ranking] == ["W-B", "W-A"]


def test_over_a_band_the_smallest_maximum_difference_wins():
    # rule: for broadband, the smallest maximum |dn| over the band [practice, computations.md]
    stock = _stock(("W-A", 1.5170, 40.0, 10), ("W-B", 1.5185, 64.2, 10))
    grid = np.linspace(420.0, 680.0, 261)
    substrate_n = _cauchy(1.5168, 64.2, grid)
    worst = {
        sid: np.max(np.abs(_cauchy(n, v, grid) - substrate_n))
        for sid, n, v in (("W-A", 1.5170, 40.0), ("W-B", 1.5185, 64.2))
    }
    choice = rank_witness_glasses(SUBSTRATE, stock, band_nm=(420.0, 680.0))
    assert [r.stock_id for r in choice.ranking] == sorted(worst, key=worst.get)
    first = choice.ranking[0]
    assert first.abs_delta_n == pytest.approx(worst[first.stock_id], rel=1e-9)
    assert 420.0 <= first.worst_wavelength_nm <= 680.0
    assert "maximum over the band" in choice.convention
    assert "420-680 nm" in choice.design


def test_ties_in_index_are_broken_by_abbe_number_difference():
    # rule: ties broken by |dV| [practice, computations.md]; both match n_d exactly at the d line
    stock = _stock(("W-FAR", 1.5168, 50.0, 4), ("W-NEAR", 1.5168, 60.0, 4))
    choice = rank_witness_glasses(SUBSTRATE, stock, wavelength_nm=LINE_D_NM)
    assert [r.stock_id for r in choice.ranking] == ["W-NEAR", "W-FAR"]
    assert choice.ranking[0].delta_v == pytest.approx(60.0 - 64.2)
    assert choice.ranking[0].abs_delta_n == pytest.approx(0.0, abs=1e-12)


def test_the_tie_step_is_a_stated_lab_choice():
    # W-1 is closer in index (1e-5 vs 3e-5) but far in V_d. Within one step of 1e-4 the two
    # tie and the smaller |dV| wins; with a step of 1e-6 the smaller |dn| wins.
    stock = _stock(("W-1", 1.51681, 40.0, 4), ("W-2", 1.51683, 64.0, 4))
    coarse = rank_witness_glasses(SUBSTRATE, stock, wavelength_nm=LINE_D_NM)
    assert [r.stock_id for r in coarse.ranking] == ["W-2", "W-1"]
    fine = rank_witness_glasses(SUBSTRATE, stock, wavelength_nm=LINE_D_NM, tie_tolerance=1e-6)
    assert [r.stock_id for r in fine.ranking] == ["W-1", "W-2"]
    assert "steps of 1e-06" in fine.convention


def test_each_row_names_the_model_of_both_indices_and_flags_out_of_band():
    # Malitson fused silica [pub] as substrate with its Sellmeier; a candidate with only
    # n_d/V_d uses the model with its stated 400-1000 nm band
    substrate = GlassOptics("fused silica", sellmeier=SILICA)
    stock = [StockCandidate("W-S", GlassOptics("silica-like (invented)", n_d=1.4585, v_d=67.8), 6)]
    choice = rank_witness_glasses(substrate, stock, band_nm=(350.0, 1100.0))
    row = choice.ranking[0]
    assert row.substrate_model.startswith("Sellmeier")
    assert "400-1000 nm" in row.witness_model
    assert any("outside the valid band" in note for note in row.notes)
    with pytest.raises(InputError, match="W-S"):
        rank_witness_glasses(substrate, stock, band_nm=(350.0, 1100.0), outside="refuse")


def test_the_silica_model_tracks_silica_sellmeier_within_the_band():
    # Malitson Sellmeier vs the n_d/V_d model of the same glass: < 1.5e-3 over 400-1000 nm
    substrate = GlassOptics("fused silica", sellmeier=SILICA)
    stock = [StockCandidate("W-S", GlassOptics("silica model", n_d=1.45846, v_d=67.82), 6)]
    row = rank_witness_glasses(substrate, stock, band_nm=(400.0, 1000.0)).ranking[0]
    assert row.abs_delta_n < 1.5e-3 and not row.notes


def test_ranking_refuses_bad_input_naming_the_item():
    stock = _stock(("W-A", 1.517, 64.0, 3))
    with pytest.raises(InputError, match="either wavelength_nm"):
        rank_witness_glasses(SUBSTRATE, stock)
    with pytest.raises(InputError, match="band_nm"):
        rank_witness_glasses(SUBSTRATE, stock, band_nm=(700.0, 400.0))
    with pytest.raises(InputError, match="candidates item 2 .*'W-A'.*twice"):
        rank_witness_glasses(SUBSTRATE, stock * 2, wavelength_nm=550.0)
    with pytest.raises(InputError, match="pieces_available"):
        rank_witness_glasses(SUBSTRATE, _stock(("W-X", 1.5, 60.0, -1)), wavelength_nm=550.0)
    nodata = [StockCandidate("W-N", GlassOptics("no data"), 2)]
    with pytest.raises(InputError, match="candidates item 1 .*'no data'"):
        rank_witness_glasses(SUBSTRATE, nodata, wavelength_nm=550.0)


# --- allocation ------------------------------------------------------------------------------
# No published source: the allocation follows the ranking (witness matched to the substrate as
# closely as possible, test-methods.md Facts of the trade, common practice) and the stated
# convention of one glass per lot unless mixing is allowed (common practice). The expected
# takes below are counted by hand.


def test_it_takes_all_pieces_from_the_best_glass_that_covers_the_need():
    stock = [
        StockCount("S-1", "glass A", 2),
        StockCount("S-2", "glass A", 3),
        StockCount("S-3", "glass B", 10),
    ]
    result = allocate_witness_pieces(4, stock)
    assert [(t.stock_id, t.pieces) for t in result.takes] == [("S-1", 2), ("S-2", 2)]
    assert result.short == 0


def test_it_skips_a_better_glass_with_too_few_pieces_and_says_so():
    stock = [StockCount("S-1", "glass A", 2), StockCount("S-3", "glass B", 10)]
    result = allocate_witness_pieces(6, stock)
    assert [(t.stock_id, t.pieces) for t in result.takes] == [("S-3", 6)]
    assert "glass A (2 pieces)" in result.message


def test_it_reports_what_is_short():
    stock = [StockCount("S-1", "glass A", 3), StockCount("S-2", "glass B", 2)]
    one = allocate_witness_pieces(8, stock)
    assert [(t.stock_id, t.pieces) for t in one.takes] == [("S-1", 3)]
    assert one.short == 5
    mixed = allocate_witness_pieces(8, stock, one_glass=False)
    assert [(t.stock_id, t.pieces) for t in mixed.takes] == [("S-1", 3), ("S-2", 2)]
    assert mixed.short == 3 and "3 short" in mixed.message
    empty = allocate_witness_pieces(2, [StockCount("S-9", "glass C", 0)])
    assert empty.takes == () and empty.short == 2


def test_allocation_follows_the_ranking():
    stock = _stock(("W-A", 1.5170, 64.0, 1), ("W-B", 1.5300, 64.0, 9))
    choice = rank_witness_glasses(SUBSTRATE, stock, wavelength_nm=550.0)
    result = allocate_witness_pieces(1, stock_counts(choice))
    assert result.takes[0].stock_id == "W-A"


def test_allocation_refuses_bad_counts():
    with pytest.raises(InputError, match="needed"):
        allocate_witness_pieces(-1, [])
    with pytest.raises(InputError, match="stock item 1 .*pieces_available"):
        allocate_witness_pieces(1, [StockCount("S", "g", 2.5)])  # type: ignore[arg-type]
