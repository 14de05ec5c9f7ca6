//! Gmsh MSH 4.1 import (filled in by the I/O work).
