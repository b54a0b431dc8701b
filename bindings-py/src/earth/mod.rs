//! The Earth: models (`model`), and geodesy, gravity, field quantities and the Earth Rotation
//! Angle on numpy arrays (`geodesy`), mirroring the core's `earth`.

pub mod geodesy;
pub mod model;
