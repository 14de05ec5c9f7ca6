//! Results as terminal tables, JSON, CSV, VTK files and the spectrum picture.

pub mod csv;
pub mod folder;
pub mod json;
pub mod response_doc;
pub mod response_svg;
pub mod review;
pub mod spectrum;
pub mod summary;
pub mod svg;
pub mod table;
pub mod touchstone;
pub mod vtk_heating;
pub mod vtk_modes;
