//! Navigation on numpy arrays: ideal IMU output and increments (from a Python callable or a
//! recorded log), the strapdown stepper and batch runner, the IMU error model and lever arms.
//! Conversion, validation, batching and error mapping only; the math is the core's `nav`.
//!
//! Files mirror the core's `nav`: `imu`, `history`, `runner`, `strapdown`, `sensor`, `lever`;
//! `options` names their errors and parses their options.

pub mod history;
pub mod imu;
pub mod lever;
pub mod options;
pub mod runner;
pub mod sensor;
pub mod strapdown;
