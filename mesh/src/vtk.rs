//! VTK XML UnstructuredGrid writer (filled in by the I/O work).
