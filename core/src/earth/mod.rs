//! The Earth: reference ellipsoids, geodetic coordinates, local-level frames, Earth rotation,
//! gravity and the field quantities built on them.
//!
//! Everything here is `no_std` and allocation-free and plugs into the typed frame machinery:
//! [`earth_motion`] gives ECEF relative to ECI and [`local_level_motion`] a vehicle's NED frame
//! relative to ECEF, so that `eci → ecef → ned → body` is one chain of
//! [`then`](crate::motion::FrameMotion::then):
//!
//! ```
//! use approx::assert_relative_eq;
//! use nalgebra::Vector3;
//! use rotaframe::earth::{earth_motion, earth_rate_ned, local_level_motion, transport_rate_ned, Geodetic, WGS84};
//! let here = Geodetic::from_degrees(45.0, 7.0, 300.0);
//! let v_ned = Vector3::new(30.0, 40.0, 0.0);
//! let ned_in_eci = earth_motion(&WGS84, 100.0, 0.0).unwrap()
//!     .then(&local_level_motion(&WGS84, &here, &v_ned, &Vector3::zeros()).unwrap());
//! // The NED frame turns relative to inertial space at Earth rate plus transport rate.
//! let expected = earth_rate_ned(&WGS84, here.latitude).unwrap()
//!     + transport_rate_ned(&WGS84, here.latitude, here.height, &v_ned).unwrap();
//! assert_relative_eq!(ned_in_eci.angular_velocity_in_child(), expected, max_relative = 1e-12);
//! ```
//!
//! Conventions: latitudes are geodetic, longitudes east-positive and returned in (−π, π],
//! heights ellipsoidal and positive up; "gravity" includes the centrifugal term and
//! "gravitation" does not (see [`gravity`]).

pub mod celestial;
mod cip_series;
pub mod field;
pub mod geodetic;
pub mod gravity;
pub mod local;
pub mod model;
pub mod rotation;

pub use field::{centripetal_acceleration_ecef, coriolis_parameter, eotvos_correction};
pub use geodetic::{
    Geodetic, ecef_to_geodetic, ecef_to_geodetic_many, ecef_to_geodetic_slices, geodetic_to_ecef, geodetic_to_ecef_many,
    geodetic_to_ecef_slices,
};
pub use gravity::{
    GravityModel, gravitation_ecef, gravity_ecef, gravity_ned, normal_gravity, normal_gravity_at_height, point_mass_gravitation,
    schuler_period,
};
pub use local::{
    ENU_FROM_NED, POLE_EXCLUSION, RadiiOfCurvature, coriolis_ned, earth_rate_ned, ecef_from_ned_quaternion, enu_from_ecef,
    enu_in_ned, local_level_motion, ned_from_ecef, radii_of_curvature, transport_rate_ned,
};
pub use model::{EarthModel, EarthModelConstants, GRS80, MAX_FLATTENING, WGS84};
pub use rotation::{ERA_RATE, earth_motion, earth_motion_at_rate, earth_motion_at_ut1, earth_rotation_angle};
