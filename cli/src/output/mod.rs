//! Results as terminal tables, JSON, CSV and VTK files.

pub mod csv;
pub mod json;
pub mod summary;
pub mod table;
pub mod vtk_modes;
