//! The leakage-free assessment protocol, metrics, statistics and diagnostics.
