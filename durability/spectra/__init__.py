"""Spectral evidence: spectrophotometer exports, band figures, conformance, plots.

Pure computations (no Django, no settings). Import from here:

    from durability.spectra import parse_spectrum, Band, analyze_band

The plotting functions live in `durability.spectra.plot`, which imports matplotlib
only when called.
"""

from durability.spectra.analysis import (
    Band,
    BandAnalysis,
    Extremum,
    LimitCheck,
    RefinedExtremum,
    SpectralChange,
    SpectralLimit,
    analyze_band,
    band_average,
    check_limit,
    check_limits,
    compare_spectra,
    parabola_vertex,
    refine_extremum,
)
from durability.spectra.importers import (
    Spectrum,
    convert_value,
    parse_spectrum,
    read_spectrum,
)

__all__ = [
    "Band",
    "BandAnalysis",
    "Extremum",
    "LimitCheck",
    "RefinedExtremum",
    "SpectralChange",
    "SpectralLimit",
    "Spectrum",
    "analyze_band",
    "band_average",
    "check_limit",
    "check_limits",
    "compare_spectra",
    "convert_value",
    "parabola_vertex",
    "parse_spectrum",
    "read_spectrum",
    "refine_extremum",
]
