//! The Earth: models (`model`), geodesy, gravity, field quantities and the Earth Rotation
//! Angle on numpy arrays (`geodesy`), and the IERS celestial-to-terrestrial transformation
//! (`celestial`), mirroring the core's `earth`.

pub mod celestial;
pub mod geodesy;
pub mod model;
