//! Aerodynamic drag per unit mass, a built-in force for [`propagate`](super::propagate).
//!
//! The drag equation with the body's ballistic coefficient `β = m / (C_D A)` (kg/m²):
//!
//! ```text
//! f = −ρ / (2β) · |u| u,     u = v − w
//! ```
//!
//! with `v` the body's velocity relative to the propagation frame, `w` the wind (the air's
//! velocity relative to that frame), both resolved in it, and `ρ` the air density: constant,
//! or the isothermal exponential atmosphere `ρ = ρ₀ exp(−z / H)`, `z = up · r` the height of
//! the body above the frame's origin along the frame's `up` direction (common practice; see
//! any exterior-ballistics or atmospheric-flight text, e.g. the drag equation and the
//! exponential atmosphere in Anderson, *Introduction to Flight*). The air is taken at rest in
//! the propagation frame apart from the wind: use it in a frame that moves with the air mass
//! (Earth-fixed, a site's local-level frame), not in an inertial or spinning frame.

use nalgebra::Vector3;

use crate::error::{Error, Result};
use crate::limits;
use crate::math;

/// The air density of a [`Drag`] force.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum AirDensity {
    /// A constant density (kg/m³).
    Constant(f64),
    /// `ρ₀ exp(−(up · r) / H)`: density `at_origin` (kg/m³) at the frame's origin, scale height
    /// `scale_height` (m), `up` a unit vector resolved in the propagation frame.
    Exponential {
        /// Density at the frame's origin (kg/m³).
        at_origin: f64,
        /// Scale height (m).
        scale_height: f64,
        /// The upward direction, resolved in the propagation frame (unit).
        up: Vector3<f64>,
    },
}

/// Quadratic aerodynamic drag ([module documentation](self)).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Drag {
    ballistic_coefficient: f64,
    density: AirDensity,
    wind: Vector3<f64>,
}

impl Drag {
    /// Drag on a body of ballistic coefficient `m / (C_D A)` (kg/m²) in air of `density`, with
    /// `wind` the air's velocity relative to the propagation frame (m/s, resolved in it). An
    /// exponential density's `up` is normalised.
    ///
    /// # Errors
    /// [`Error::OutOfRange`] naming `ballistic_coefficient` (outside (0, 1e12] kg/m²) or
    /// `density` (negative, or above 1e4 kg/m³); [`Error::NotPositive`] naming
    /// `scale_height` or `up` (zero);
    /// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `wind` or `up`.
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use nalgebra::Vector3;
    /// use rotaframe::propagate::{AirDensity, Drag};
    /// // A 2 kg/m² body at 10 m/s in sea-level air: 1.225 · 100 / 4 = 30.6 m/s² against v.
    /// let drag = Drag::new(2.0, AirDensity::Constant(1.225), Vector3::zeros()).unwrap();
    /// let f = drag.acceleration(&Vector3::zeros(), &Vector3::new(10.0, 0.0, 0.0));
    /// assert_relative_eq!(f.x, -30.625, max_relative = 1e-15);
    /// ```
    pub fn new(ballistic_coefficient: f64, density: AirDensity, wind: Vector3<f64>) -> Result<Self> {
        if !(ballistic_coefficient > 0.0 && ballistic_coefficient <= 1e12) {
            return Err(if ballistic_coefficient.is_nan() {
                Error::NonFinite { quantity: "ballistic_coefficient" }
            } else {
                Error::OutOfRange { quantity: "ballistic_coefficient", value: ballistic_coefficient, min: 0.0, max: 1e12 }
            });
        }
        limits::check_vector(&wind, limits::MAX_VELOCITY, "m/s", "wind")?;
        let check_density = |rho: f64| -> Result<()> {
            if rho.is_nan() {
                return Err(Error::NonFinite { quantity: "density" });
            }
            if !(0.0..=1e4).contains(&rho) {
                return Err(Error::OutOfRange { quantity: "density", value: rho, min: 0.0, max: 1e4 });
            }
            Ok(())
        };
        let density = match density {
            AirDensity::Constant(rho) => {
                check_density(rho)?;
                density
            }
            AirDensity::Exponential { at_origin, scale_height, up } => {
                check_density(at_origin)?;
                if !(scale_height > 0.0 && scale_height <= limits::MAX_POSITION) {
                    return Err(if scale_height.is_nan() {
                        Error::NonFinite { quantity: "scale_height" }
                    } else {
                        Error::NotPositive { quantity: "scale_height", value: scale_height }
                    });
                }
                limits::check_vector(&up, limits::MAX_FREE_VECTOR, "", "up")?;
                let norm = up.norm();
                if norm.is_nan() || norm <= 0.0 {
                    return Err(Error::NotPositive { quantity: "up", value: norm });
                }
                AirDensity::Exponential { at_origin, scale_height, up: up / norm }
            }
        };
        Ok(Self { ballistic_coefficient, density, wind })
    }

    /// The ballistic coefficient (kg/m²).
    #[must_use]
    pub fn ballistic_coefficient(&self) -> f64 {
        self.ballistic_coefficient
    }

    /// The air density model.
    #[must_use]
    pub fn density(&self) -> AirDensity {
        self.density
    }

    /// The wind (m/s, resolved in the propagation frame).
    #[must_use]
    pub fn wind(&self) -> Vector3<f64> {
        self.wind
    }

    /// The air density at `position` (m, in the propagation frame; kg/m³).
    #[must_use]
    #[inline]
    pub fn density_at(&self, position: &Vector3<f64>) -> f64 {
        match self.density {
            AirDensity::Constant(rho) => rho,
            AirDensity::Exponential { at_origin, scale_height, up } => at_origin * math::exp(-up.dot(position) / scale_height),
        }
    }

    /// The drag acceleration (m/s², resolved in the propagation frame) on a body at `position`
    /// moving at `velocity` relative to the frame.
    #[must_use]
    #[inline]
    pub fn acceleration(&self, position: &Vector3<f64>, velocity: &Vector3<f64>) -> Vector3<f64> {
        let airspeed = velocity - self.wind;
        airspeed * (-self.density_at(position) * airspeed.norm() / (2.0 * self.ballistic_coefficient))
    }

    /// [`acceleration`](Self::acceleration) with its inputs and result checked: for callers
    /// outside a propagation (which checks the force it is given).
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `position` (at most
    /// [`MAX_POSITION`](limits::MAX_POSITION)) or `velocity` (at most
    /// [`MAX_VELOCITY`](limits::MAX_VELOCITY)); [`Error::BeyondLimit`] naming `drag` when the
    /// acceleration passes [`MAX_ACCELERATION`](limits::MAX_ACCELERATION) (an exponential
    /// atmosphere far below its origin, a speed near the limit) or overflows.
    ///
    /// ```
    /// use nalgebra::Vector3;
    /// use rotaframe::propagate::{AirDensity, Drag};
    /// let drag = Drag::new(100.0, AirDensity::Constant(1.2), Vector3::zeros())?;
    /// let a = drag.checked_acceleration(&Vector3::zeros(), &Vector3::new(10.0, 0.0, 0.0))?;
    /// assert!((a.x + 0.6).abs() < 1e-15); // −ρ v² / (2 β)
    /// assert!(drag.checked_acceleration(&Vector3::new(f64::NAN, 0.0, 0.0), &Vector3::zeros()).is_err());
    /// # Ok::<(), rotaframe::Error>(())
    /// ```
    pub fn checked_acceleration(&self, position: &Vector3<f64>, velocity: &Vector3<f64>) -> Result<Vector3<f64>> {
        limits::check_vector(position, limits::MAX_POSITION, "m", "position")?;
        limits::check_vector(velocity, limits::MAX_VELOCITY, "m/s", "velocity")?;
        let a = self.acceleration(position, velocity);
        limits::check_vector(&a, limits::MAX_ACCELERATION, "m/s²", "drag").map_err(|e| match e {
            Error::NonFinite { .. } => {
                Error::BeyondLimit { quantity: "drag", magnitude: f64::INFINITY, limit: limits::MAX_ACCELERATION, unit: "m/s²" }
            }
            other => other,
        })?;
        Ok(a)
    }
}
