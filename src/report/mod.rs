//! Writers: each renders a result into bytes, with no file system access; the pipeline
//! writes the bytes atomically. One file per format.

pub mod csv;
pub mod html;
pub mod json;
pub mod nodal;
pub mod summary;
pub mod svg;
pub mod units;
pub mod view;
pub mod vtk;
