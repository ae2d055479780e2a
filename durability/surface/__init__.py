"""Surface-imperfection callouts and their evaluation (MIL-PRF-13830B scratch-dig, ISO 10110-7)."""
