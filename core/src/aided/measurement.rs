//! The measurements an aided navigator takes, with their noise, checked when made; their
//! models (predicted value, residual, Jacobian) are those of
//! [`linearise::aiding`](crate::linearise::aiding).

use nalgebra::{UnitQuaternion, Vector3};

use crate::earth::{EarthModel, Geodetic};
use crate::error::{Error, Result, ensure_finite1, ensure_finite3};
use crate::limits;
use crate::linearise::aiding::{self, LinearMeasurement, NavPoint};

/// Largest lever arm accepted (m): a sensor more than a kilometre from the navigation point
/// is a mistake in the units.
pub const MAX_LEVER_ARM: f64 = 1.0e3;

/// One measurement and its 1σ noise (per row, in the measurement's units; each σ positive).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Measurement {
    /// A GNSS position fix: geodetic antenna position, σ north, east, down (m), antenna lever
    /// arm (m, body axes).
    Position {
        /// The measured antenna position.
        position: Geodetic,
        /// 1σ north, east, down (m).
        sigma_ned: Vector3<f64>,
        /// The antenna's position relative to the navigation point (m, body axes).
        lever_arm: Vector3<f64>,
    },
    /// A GNSS velocity fix (m/s, NED) at the antenna.
    Velocity {
        /// The measured antenna velocity relative to the Earth, NED (m/s).
        velocity_ned: Vector3<f64>,
        /// 1σ per axis (m/s).
        sigma_ned: Vector3<f64>,
        /// The antenna's lever arm (m, body axes).
        lever_arm: Vector3<f64>,
    },
    /// The vehicle stands still: zero velocity relative to the Earth.
    ZeroVelocity {
        /// 1σ per NED axis (m/s).
        sigma_ned: Vector3<f64>,
    },
    /// The body does not turn relative to the Earth.
    ZeroAngularRate {
        /// 1σ per body axis (rad/s).
        sigma: Vector3<f64>,
    },
    /// The land-vehicle constraint: no lateral or vertical velocity in vehicle axes at the
    /// lever arm.
    VehicleConstraint {
        /// Body-to-vehicle rotation (vehicle axes forward, right, down).
        mounting: UnitQuaternion<f64>,
        /// The constrained point (the rear axle's centre, say) in body axes (m).
        lever_arm: Vector3<f64>,
        /// 1σ lateral and vertical (m/s).
        sigma: [f64; 2],
    },
    /// An odometer's forward speed at the lever arm, in vehicle axes.
    Odometer {
        /// Measured forward speed (m/s; negative when reversing).
        speed: f64,
        /// Body-to-vehicle rotation.
        mounting: UnitQuaternion<f64>,
        /// The wheel's point in body axes (m).
        lever_arm: Vector3<f64>,
        /// 1σ (m/s).
        sigma: f64,
    },
    /// An ellipsoidal height (barometric, or another source reduced to the ellipsoid).
    Height {
        /// Height above the ellipsoid (m).
        height: f64,
        /// 1σ (m).
        sigma: f64,
    },
    /// A true heading: dual-antenna, or a magnetometer's heading plus the declination
    /// ([`Measurement::magnetic_heading`]).
    Heading {
        /// Heading clockwise from true north (rad).
        heading: f64,
        /// 1σ (rad).
        sigma: f64,
    },
}

impl Measurement {
    /// A heading from a magnetometer: the magnetic heading plus the declination (east
    /// positive) gives the true heading (rad).
    ///
    /// ```
    /// use rotaframe::aided::Measurement;
    /// let m = Measurement::magnetic_heading(0.5, 0.05, 0.02);
    /// assert_eq!(m, Measurement::Heading { heading: 0.55, sigma: 0.02 });
    /// ```
    #[must_use]
    pub fn magnetic_heading(magnetic_heading: f64, declination: f64, sigma: f64) -> Self {
        Measurement::Heading { heading: magnetic_heading + declination, sigma }
    }

    /// How many rows the measurement has.
    #[must_use]
    pub fn rows(&self) -> usize {
        match self {
            Measurement::Position { .. }
            | Measurement::Velocity { .. }
            | Measurement::ZeroVelocity { .. }
            | Measurement::ZeroAngularRate { .. } => 3,
            Measurement::VehicleConstraint { .. } => 2,
            Measurement::Odometer { .. } | Measurement::Height { .. } | Measurement::Heading { .. } => 1,
        }
    }

    /// The 1σ of each row (unused rows 1).
    #[must_use]
    pub fn sigma(&self) -> Vector3<f64> {
        match *self {
            Measurement::Position { sigma_ned, .. }
            | Measurement::Velocity { sigma_ned, .. }
            | Measurement::ZeroVelocity { sigma_ned } => sigma_ned,
            Measurement::ZeroAngularRate { sigma } => sigma,
            Measurement::VehicleConstraint { sigma, .. } => Vector3::new(sigma[0], sigma[1], 1.0),
            Measurement::Odometer { sigma, .. } | Measurement::Height { sigma, .. } | Measurement::Heading { sigma, .. } => {
                Vector3::new(sigma, 1.0, 1.0)
            }
        }
    }

    /// Checks the measurement: finite, σ positive, lever arms within [`MAX_LEVER_ARM`],
    /// positions and speeds within the model's and the crate's limits, unit mountings.
    ///
    /// # Errors
    /// [`Error::NonFinite`], [`Error::NotPositive`], [`Error::OutOfRange`],
    /// [`Error::BeyondLimit`] or [`Error::NotUnitQuaternion`] naming the field (`sigma`,
    /// `lever_arm`, `position`'s parts, `velocity_ned`, `speed`, `height`, `heading`,
    /// `mounting`).
    ///
    /// ```
    /// use nalgebra::Vector3;
    /// use rotaframe::aided::Measurement;
    /// let bad = Measurement::ZeroVelocity { sigma_ned: Vector3::new(0.01, -0.01, 0.01) };
    /// assert_eq!(bad.validate(&rotaframe::earth::WGS84).unwrap_err().quantity(), "sigma");
    /// ```
    pub fn validate(&self, model: &EarthModel) -> Result<()> {
        let sigma = self.sigma();
        ensure_finite3(&sigma, "sigma")?;
        if let Some(&bad) = sigma.iter().find(|&&s| s <= 0.0) {
            return Err(Error::NotPositive { quantity: "sigma", value: bad });
        }
        let arm = |l: &Vector3<f64>| limits::check_vector(l, MAX_LEVER_ARM, "m", "lever_arm");
        let unit = |q: &UnitQuaternion<f64>| crate::rotation::quaternion_from_wxyz([q.w, q.i, q.j, q.k], "mounting").map(|_| ());
        match self {
            Measurement::Position { position, lever_arm, .. } => {
                position.validate_for(model)?;
                arm(lever_arm)
            }
            Measurement::Velocity { velocity_ned, lever_arm, .. } => {
                limits::check_vector(velocity_ned, limits::MAX_VELOCITY, "m/s", "velocity_ned")?;
                arm(lever_arm)
            }
            Measurement::ZeroVelocity { .. } | Measurement::ZeroAngularRate { .. } => Ok(()),
            Measurement::VehicleConstraint { mounting, lever_arm, .. } => {
                unit(mounting)?;
                arm(lever_arm)
            }
            Measurement::Odometer { speed, mounting, lever_arm, .. } => {
                ensure_finite1(*speed, "speed")?;
                if speed.abs() > limits::MAX_VELOCITY {
                    return Err(Error::BeyondLimit {
                        quantity: "speed",
                        magnitude: speed.abs(),
                        limit: limits::MAX_VELOCITY,
                        unit: "m/s",
                    });
                }
                unit(mounting)?;
                arm(lever_arm)
            }
            Measurement::Height { height, .. } => limits::check_height(model, *height, "height"),
            Measurement::Heading { heading, .. } => {
                ensure_finite1(*heading, "heading")?;
                if heading.abs() > 4.0 * core::f64::consts::PI {
                    return Err(Error::OutOfRange {
                        quantity: "heading",
                        value: *heading,
                        min: -4.0 * core::f64::consts::PI,
                        max: 4.0 * core::f64::consts::PI,
                    });
                }
                Ok(())
            }
        }
    }

    /// The measurement linearised at `point` (see [`linearise::aiding`](crate::linearise::aiding)).
    ///
    /// # Errors
    /// As the model: a heading at ±90° pitch; a position fix outside the model (ECEF form).
    pub fn linearise<const N: usize>(&self, point: &NavPoint, model: &EarthModel) -> Result<LinearMeasurement<N>> {
        Ok(match self {
            Measurement::Position { position, lever_arm, .. } => aiding::position_fix(point, model, position, lever_arm)?,
            Measurement::Velocity { velocity_ned, lever_arm, .. } => aiding::velocity_fix(point, velocity_ned, lever_arm),
            Measurement::ZeroVelocity { .. } => aiding::zero_velocity(point),
            Measurement::ZeroAngularRate { .. } => aiding::zero_angular_rate(point),
            Measurement::VehicleConstraint { mounting, lever_arm, .. } => aiding::vehicle_constraint(point, mounting, lever_arm),
            Measurement::Odometer { speed, mounting, lever_arm, .. } => aiding::odometer(point, *speed, mounting, lever_arm),
            Measurement::Height { height, .. } => aiding::height_fix(point, *height),
            Measurement::Heading { heading, .. } => aiding::heading_fix(point, *heading)?,
        })
    }
}
