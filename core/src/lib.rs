//! # rotaframe
//!
//! Kinematics in moving (non-inertial) reference frames for navigation and guidance work:
//! typed frames, the motion of one frame relative to another, the transport theorem, and the
//! apparent (Coriolis, centrifugal, Euler, translational) accelerations that appear when a
//! frame rotates or accelerates.
//!
//! ## Modules
//!
//! * [`frames`]: frame markers (`Eci`, `Ecef`, `Ned`, `Enu`, `Body`, your own with [`frame!`]),
//!   free vectors and point kinematics;
//! * [`motion`]: [`FrameMotion<P, C>`](motion::FrameMotion), the transport theorem, composition
//!   and inverse;
//! * [`apparent`]: translational, Coriolis, centrifugal and Euler accelerations;
//! * [`rotation`]: quaternions, direction-cosine matrices, Euler angles, rotation vectors;
//! * [`earth`]: ellipsoids, geodetic coordinates, local-level frames, Earth rotation, gravity;
//! * [`dispatch`]: run-time choice of AVX2 + FMA code paths (one binary for every x86-64 CPU);
//! * [`graph`]: frame graphs over time: any frame relative to any other, at any times;
//! * [`limits`]: the supported input ranges (finite input inside them gives finite output);
//! * [`propagate`]: free-body trajectories in moving frames, with the deflection budget of
//!   the apparent terms;
//! * [`nav`]: ideal IMU output and increments, strapdown mechanization (NED and ECEF), sensor
//!   error models, lever arms;
//! * [`linearise`]: Jacobians of the transforms and the inertial error-state model;
//! * [`calibrate`]: IMU calibration from multi-position and rate-table tests, Allan deviation
//!   and noise terms.
//!
//! ## Conventions
//!
//! * SI units throughout; angles in radians (functions that take degrees say so in their name).
//! * A [`FrameMotion<P, C>`](motion::FrameMotion) describes child frame C *relative to* parent
//!   frame P. Its rotation maps C-coordinates to P-coordinates. Its vectors are *resolved in* P
//!   unless a name says otherwise (`angular_velocity_in_child`).
//! * Quaternions are Hamilton, scalar first `[w, x, y, z]` at every interface.
//! * f64 everywhere. The math allocates nothing; with `--no-default-features` the crate is
//!   `#![no_std]`.
//!
//! ## Example
//!
//! An accelerometer 0.3 m from the axis of a rate table turning at 1 rev/s, seen from the
//! table:
//!
//! ```
//! use approx::assert_relative_eq;
//! use nalgebra::Vector3;
//! use rotaframe::{apparent::apparent_acceleration, frames::PointKinematics, motion::FrameMotion};
//! rotaframe::frame!(Lab: inertial);
//! rotaframe::frame!(Table);
//! let rate = 2.0 * std::f64::consts::PI;
//! let table = FrameMotion::<Lab, Table>::spin(Vector3::z(), rate, 0.25).unwrap();
//! let terms = apparent_acceleration(&table, &PointKinematics::at_rest(Vector3::new(0.3, 0.0, 0.0)));
//! assert_relative_eq!(terms.centrifugal, Vector3::new(rate * rate * 0.3, 0.0, 0.0), max_relative = 1e-15);
//! assert_eq!(terms.coriolis, Vector3::zeros());
//! ```
//!
//! ## Caution
//!
//! rotaframe is not certified for safety-of-life use. Validate it against your own
//! requirements, applicable standards and licensed engineering practice before relying on it
//! for navigation, guidance or trajectory decisions.

#![cfg_attr(not(feature = "std"), no_std)]
#![deny(missing_docs)]
// One module holds unsafe code: `dispatch`, which calls the AVX2 + FMA copy of the hot loops
// after checking that the CPU has those instructions.
#![deny(unsafe_code)]

#[cfg(feature = "alloc")]
extern crate alloc;

mod dd;
mod dd_tables;
mod math;

pub mod aided;
pub mod apparent;
pub mod calibrate;
pub mod dispatch;
pub mod earth;
pub mod error;
pub mod frames;
pub mod graph;
pub mod limits;
pub mod linearise;
pub mod motion;
pub mod nav;
pub mod propagate;
pub mod rotation;
pub mod time;

pub use error::{BatchError, Error, Result};

/// The linear-algebra crate rotaframe's types come from, re-exported so that users and
/// bindings name the same version.
pub use nalgebra;

/// The README's Rust examples, compiled and run as doctests so that they stay correct (with
/// `std`: they use the graph and the standard library).
#[cfg(all(doctest, feature = "std"))]
#[doc = include_str!("../../README.md")]
pub struct ReadmeDoctests;
