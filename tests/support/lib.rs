//! Shared helpers for the reference checks in `tests/`.
