//! Cavity mesher (filled in by the mesher work).
