//! Geometry-file errors (filled in by the geometry work).
