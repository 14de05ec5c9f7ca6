//! Element quality figures (filled in by the mesher work).
