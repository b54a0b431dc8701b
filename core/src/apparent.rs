//! Apparent (fictitious) accelerations in a frame that moves relative to an inertial frame.
//!
//! Let frame B move relative to an inertial frame I with origin acceleration `a₀`, angular
//! velocity `ω` and angular acceleration `α` (all relative to I). A point with position `r` and
//! velocity `v` relative to B has true (inertial) acceleration `a_I`. Solving the transport
//! theorem (see [`motion`](crate::motion)) for the acceleration seen in B, with every vector
//! resolved in B:
//!
//! ```text
//! a_B = a_I − a₀ − 2 ω × v − ω × (ω × r) − α × r
//!             └┬┘   └──┬───┘  └────┬─────┘  └─┬──┘
//!       translational Coriolis  centrifugal   Euler
//! ```
//!
//! Each apparent term is an acceleration that an observer in B must add to the true
//! acceleration for Newton's second law to hold in B: `m a_B = F + m (sum of the terms)`.
//! Signs, resolved in B:
//!
//! * translational `−a₀`: opposite to the frame's acceleration;
//! * Coriolis `−2 ω × v`: perpendicular to the velocity; for `ω` pointing up (a turntable turning
//!   counter-clockwise seen from above) it deflects motion to the right;
//! * centrifugal `−ω × (ω × r)`: away from the rotation axis, magnitude `|ω|² ρ` at distance ρ
//!   from the axis;
//! * Euler `−α × r`: opposite to the tangential direction in which the rotation is speeding up.
//!
//! Reference: Goldstein, *Classical Mechanics*, 3rd ed., ch. 4; Kibble & Berkshire,
//! *Classical Mechanics*, 5th ed., ch. 5.

use core::fmt;
use core::marker::PhantomData;

use nalgebra::Vector3;

use crate::error::Result;
use crate::frames::{AnyFrame, Frame, InertialFrame, PointKinematics};
use crate::motion::FrameMotion;

/// The rotation and origin acceleration of a frame B relative to an inertial frame, resolved
/// in B itself. This is the input of the plain-vector [`apparent_terms`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FrameDynamics {
    /// Angular velocity of B relative to the inertial frame, resolved in B (rad/s).
    pub angular_velocity: Vector3<f64>,
    /// Angular acceleration of B relative to the inertial frame, resolved in B (rad/s²).
    pub angular_acceleration: Vector3<f64>,
    /// Acceleration of B's origin relative to the inertial frame, resolved in B (m/s²).
    pub origin_acceleration: Vector3<f64>,
}

impl FrameDynamics {
    /// Checks every part for NaN, infinity and magnitudes beyond the [`limits`](crate::limits),
    /// naming the first bad one.
    ///
    /// # Errors
    /// [`Error::NonFinite`](crate::Error::NonFinite) or
    /// [`Error::BeyondLimit`](crate::Error::BeyondLimit).
    pub fn validate(&self) -> Result<()> {
        use crate::limits::{MAX_ACCELERATION, MAX_ANGULAR_ACCELERATION, MAX_ANGULAR_VELOCITY, check_vector};
        check_vector(&self.angular_velocity, MAX_ANGULAR_VELOCITY, "rad/s", "angular_velocity")?;
        check_vector(&self.angular_acceleration, MAX_ANGULAR_ACCELERATION, "rad/s²", "angular_acceleration")?;
        check_vector(&self.origin_acceleration, MAX_ACCELERATION, "m/s²", "origin_acceleration")
    }

    /// The dynamics of B taken from its motion relative to an inertial frame, resolved in B.
    #[must_use]
    #[inline]
    pub fn of_motion<I: InertialFrame, B: Frame>(motion: &FrameMotion<I, B>) -> Self {
        Self {
            angular_velocity: motion.angular_velocity_in_child(),
            angular_acceleration: motion.angular_acceleration_in_child(),
            origin_acceleration: motion.acceleration_in_child(),
        }
    }
}

/// The apparent accelerations acting on a point that moves relative to a non-inertial frame,
/// each resolved in frame `B` (m/s²). `total` is the sum of the four terms. As produced they
/// belong to `B` and are resolved in it; [`resolved_in`](Self::resolved_in) re-expresses them
/// in other axes, and then `B` names those axes.
pub struct ApparentAcceleration<B: Frame = AnyFrame> {
    /// `−a₀`, from the acceleration of B's origin.
    pub translational: Vector3<f64>,
    /// `−2 ω × v`, from motion relative to the rotating frame.
    pub coriolis: Vector3<f64>,
    /// `−ω × (ω × r)`, away from the rotation axis.
    pub centrifugal: Vector3<f64>,
    /// `−α × r`, from the change of the rotation rate.
    pub euler: Vector3<f64>,
    /// Sum of the four terms.
    pub total: Vector3<f64>,
    frame: PhantomData<fn() -> B>,
}

impl<B: Frame> Clone for ApparentAcceleration<B> {
    fn clone(&self) -> Self {
        *self
    }
}
impl<B: Frame> Copy for ApparentAcceleration<B> {}
impl<B: Frame> PartialEq for ApparentAcceleration<B> {
    fn eq(&self, o: &Self) -> bool {
        self.translational == o.translational
            && self.coriolis == o.coriolis
            && self.centrifugal == o.centrifugal
            && self.euler == o.euler
            && self.total == o.total
    }
}
impl<B: Frame> fmt::Debug for ApparentAcceleration<B> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("ApparentAcceleration")
            .field("frame", &B::NAME)
            .field("translational", &self.translational.as_slice())
            .field("coriolis", &self.coriolis.as_slice())
            .field("centrifugal", &self.centrifugal.as_slice())
            .field("euler", &self.euler.as_slice())
            .field("total", &self.total.as_slice())
            .finish()
    }
}

impl<B: Frame> ApparentAcceleration<B> {
    /// The same terms (still the apparent accelerations *of frame B*) resolved in the axes of
    /// frame `P`, using the rotation of `motion` (B relative to P); translation and rates of
    /// `motion` play no part.
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use nalgebra::{UnitQuaternion, Vector3};
    /// use rotaframe::{apparent::apparent_acceleration, frames::PointKinematics, motion::FrameMotion};
    /// rotaframe::frame!(Lab: inertial);
    /// rotaframe::frame!(Table);
    /// rotaframe::frame!(Display);
    /// let table = FrameMotion::<Lab, Table>::spin(Vector3::z(), 1.0, 0.0).unwrap();
    /// let terms = apparent_acceleration(&table, &PointKinematics::at_rest(Vector3::x()));
    /// let quarter = UnitQuaternion::from_axis_angle(&Vector3::z_axis(), std::f64::consts::FRAC_PI_2);
    /// let shown = terms.resolved_in(&FrameMotion::<Display, Table>::from_rotation(quarter).unwrap());
    /// assert_relative_eq!(shown.centrifugal, Vector3::y(), epsilon = 1e-15);
    /// ```
    #[must_use]
    pub fn resolved_in<P: Frame>(&self, motion: &FrameMotion<P, B>) -> ApparentAcceleration<P> {
        let r = motion.rotation_matrix();
        ApparentAcceleration {
            translational: r * self.translational,
            coriolis: r * self.coriolis,
            centrifugal: r * self.centrifugal,
            euler: r * self.euler,
            total: r * self.total,
            frame: PhantomData,
        }
    }

    /// The same terms with the frame type forgotten.
    #[must_use]
    pub fn erase_frame(&self) -> ApparentAcceleration<AnyFrame> {
        ApparentAcceleration {
            translational: self.translational,
            coriolis: self.coriolis,
            centrifugal: self.centrifugal,
            euler: self.euler,
            total: self.total,
            frame: PhantomData,
        }
    }
}

/// The apparent-acceleration terms for a point at `position` with `velocity` relative to a
/// frame B whose `dynamics` relative to an inertial frame are given; every vector is resolved
/// in B. This plain-vector form serves the bindings and batch loops; prefer
/// [`apparent_acceleration`] in typed code. The result is finite when the dynamics pass
/// [`FrameDynamics::validate`] and the point is within
/// [`MAX_POSITION`](crate::limits::MAX_POSITION) and [`MAX_VELOCITY`](crate::limits::MAX_VELOCITY).
///
/// # Example
/// A ball rolled towards the centre of a turntable turning counter-clockwise (ω along +z) is
/// deflected to its right:
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::apparent::{apparent_terms, FrameDynamics};
/// let table = FrameDynamics {
///     angular_velocity: Vector3::new(0.0, 0.0, 1.0),
///     angular_acceleration: Vector3::zeros(),
///     origin_acceleration: Vector3::zeros(),
/// };
/// // At (1, 0, 0) rolling inward along −x: its right-hand side is +y.
/// let terms = apparent_terms(&table, &Vector3::new(1.0, 0.0, 0.0), &Vector3::new(-0.5, 0.0, 0.0));
/// assert!(terms.coriolis.y > 0.0);
/// assert_eq!(terms.centrifugal, Vector3::new(1.0, 0.0, 0.0));
/// ```
#[must_use]
#[inline]
pub fn apparent_terms(
    dynamics: &FrameDynamics,
    position: &Vector3<f64>,
    velocity: &Vector3<f64>,
) -> ApparentAcceleration<AnyFrame> {
    let w = &dynamics.angular_velocity;
    let translational = -dynamics.origin_acceleration;
    let coriolis = -2.0 * w.cross(velocity);
    let centrifugal = -w.cross(&w.cross(position));
    let euler = -dynamics.angular_acceleration.cross(position);
    ApparentAcceleration {
        translational,
        coriolis,
        centrifugal,
        euler,
        total: translational + coriolis + centrifugal + euler,
        frame: PhantomData,
    }
}

/// The apparent-acceleration terms, resolved in B, for a point moving relative to B, where
/// `motion` is B's motion relative to an inertial frame `I`.
///
/// The acceleration of the point seen in B is then `Rᵀ a_I + total`, where `a_I` is its
/// inertial acceleration resolved in I and `R` is `motion.rotation()`.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::Vector3;
/// use rotaframe::{apparent::apparent_acceleration, frames::{Eci, Ecef, PointKinematics}, motion::FrameMotion};
/// // A point on the equator of a sphere turning at the WGS 84 rate (NIMA TR8350.2):
/// let earth = FrameMotion::<Eci, Ecef>::spin(Vector3::z(), 7.292115e-5, 0.0).unwrap();
/// let terms = apparent_acceleration(&earth, &PointKinematics::<Ecef>::at_rest(Vector3::new(6378137.0, 0.0, 0.0)));
/// assert_relative_eq!(terms.centrifugal.x, 0.0339157, max_relative = 1e-5);
/// ```
///
/// Only an inertial parent is accepted:
/// ```compile_fail
/// use rotaframe::{apparent::apparent_acceleration, frames::{Ecef, Ned, PointKinematics}, motion::FrameMotion};
/// let m = FrameMotion::<Ecef, Ned>::identity();   // ECEF rotates: not inertial
/// let _ = apparent_acceleration(&m, &PointKinematics::<Ned>::at_rest(nalgebra::Vector3::zeros()));
/// ```
#[must_use]
#[inline]
pub fn apparent_acceleration<I: InertialFrame, B: Frame>(
    motion: &FrameMotion<I, B>,
    point: &PointKinematics<B>,
) -> ApparentAcceleration<B> {
    let t = apparent_terms(&FrameDynamics::of_motion(motion), &point.position, &point.velocity);
    ApparentAcceleration {
        translational: t.translational,
        coriolis: t.coriolis,
        centrifugal: t.centrifugal,
        euler: t.euler,
        total: t.total,
        frame: PhantomData,
    }
}
