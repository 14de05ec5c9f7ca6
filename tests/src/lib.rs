//! Validation suite: see tests/.
