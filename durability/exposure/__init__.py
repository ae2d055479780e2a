"""Chamber evidence: data-logger import and exposure verification."""
