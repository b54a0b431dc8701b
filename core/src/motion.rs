//! The motion of one frame relative to another at one instant, and the transport theorem.
//!
//! A [`FrameMotion<P, C>`] is the state of child frame C relative to parent frame P:
//!
//! | part | symbol | meaning |
//! |---|---|---|
//! | [`rotation`](FrameMotion::rotation) | `R` (`q`) | maps C-coordinates to P-coordinates: `v_P = R v_C` |
//! | [`position`](FrameMotion::position) | `p₀` | C's origin relative to P, resolved in P (m) |
//! | [`velocity`](FrameMotion::velocity) | `v₀` | `dp₀/dt` seen from P, resolved in P (m/s) |
//! | [`acceleration`](FrameMotion::acceleration) | `a₀` | `d²p₀/dt²` seen from P, resolved in P (m/s²) |
//! | [`angular_velocity`](FrameMotion::angular_velocity) | `ω` | of C relative to P, resolved in P (rad/s): `dR/dt = [ω×] R` |
//! | [`angular_acceleration`](FrameMotion::angular_acceleration) | `α` | `dω/dt`, resolved in P (rad/s²) |
//!
//! The derivative of `ω` is the same whether taken in P or in C, because
//! `(dω/dt)_P = (dω/dt)_C + ω × ω`; only the axes it is resolved in differ.
//!
//! # Mapping a point (the transport theorem)
//!
//! A point with position `r`, velocity `v` and acceleration `a` relative to C, resolved in C,
//! has, relative to P and resolved in P (`dR/dt = [ω×]R`, differentiate `r_P = p₀ + R r` twice):
//!
//! ```text
//! r_P = p₀ + R r
//! v_P = v₀ + R v + ω × (R r)
//! a_P = a₀ + R a + 2 ω × (R v) + α × (R r) + ω × (ω × (R r))
//! ```
//!
//! The last three terms of `a_P` are the Coriolis, Euler and centripetal accelerations.
//!
//! # Composition
//!
//! Given C relative to P (`R₁, p₁, v₁, a₁, ω₁, α₁`, resolved in P) and D relative to C
//! (`R₂, p₂, v₂, a₂, ω₂, α₂`, resolved in C), D's origin is a point moving in C, so its motion
//! relative to P follows from the mapping above; D's axes rotate at C's rate plus their own:
//!
//! ```text
//! R   = R₁ R₂
//! p   = p₁ + R₁ p₂
//! v   = v₁ + R₁ v₂ + ω₁ × (R₁ p₂)
//! a   = a₁ + R₁ a₂ + 2 ω₁ × (R₁ v₂) + α₁ × (R₁ p₂) + ω₁ × (ω₁ × (R₁ p₂))
//! ω   = ω₁ + R₁ ω₂
//! α   = α₁ + R₁ α₂ + ω₁ × (R₁ ω₂)
//! ```
//!
//! The last line differentiates `R₁ ω₂` in P: `d(R₁ω₂)/dt = R₁ (dω₂/dt)_C + ω₁ × (R₁ ω₂)`.
//!
//! # Inverse
//!
//! P relative to C is found by asking where P's origin (`r_P = 0`, at rest in P) is in C.
//! Setting `r_P`, `v_P` and `a_P` to zero in the mapping and solving for `r`, `v`, `a`:
//!
//! ```text
//! R' = Rᵀ
//! p' = −Rᵀ p₀
//! v' = Rᵀ (ω × p₀ − v₀)
//! a' = Rᵀ (−a₀ + 2 ω × v₀ + α × p₀ − ω × (ω × p₀))
//! ω' = −Rᵀ ω
//! α' = −Rᵀ α
//! ```
//!
//! Composing a motion with its inverse gives the identity; the crate's property tests check
//! this, associativity, and agreement with finite differences of mapped positions.
//!
//! Reference: the transport theorem in any rigid-body dynamics text, e.g. H. Goldstein,
//! *Classical Mechanics*, 3rd ed., ch. 4, and P. D. Groves, *Principles of GNSS, Inertial, and
//! Multisensor Integrated Navigation Systems*, 2nd ed. (2013), ch. 2, for navigation frames.

use core::fmt;
use core::marker::PhantomData;

use nalgebra::{Matrix3, Unit, UnitQuaternion, Vector3};

use crate::error::{Error, Result, ensure_finite, ensure_finite1, ensure_finite3};
use crate::frames::{AnyFrame, Frame, FreeVector, PointKinematics};
use crate::limits;
use crate::math;
use crate::rotation::UNIT_NORM_TOLERANCE;

/// The parts of a [`FrameMotion`], named so that they cannot be passed in the wrong order.
/// `Default` is the identity motion.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::frames::{Ecef, Ned};
/// use rotaframe::motion::{FrameMotion, MotionParts};
/// let m = FrameMotion::<Ecef, Ned>::from_parts(MotionParts {
///     position: Vector3::new(4.0e6, 3.0e5, 4.9e6),
///     velocity: Vector3::new(0.0, 12.0, 0.0),
///     ..MotionParts::default()
/// }).unwrap();
/// assert_eq!(m.velocity().y, 12.0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MotionParts {
    /// Maps child coordinates to parent coordinates.
    pub rotation: UnitQuaternion<f64>,
    /// Child origin relative to the parent, resolved in the parent (m).
    pub position: Vector3<f64>,
    /// Child origin velocity relative to the parent, resolved in the parent (m/s).
    pub velocity: Vector3<f64>,
    /// Child origin acceleration relative to the parent, resolved in the parent (m/s²).
    pub acceleration: Vector3<f64>,
    /// Angular velocity of the child relative to the parent, resolved in the parent (rad/s).
    pub angular_velocity: Vector3<f64>,
    /// Angular acceleration of the child relative to the parent, resolved in the parent (rad/s²).
    pub angular_acceleration: Vector3<f64>,
}

impl Default for MotionParts {
    fn default() -> Self {
        Self {
            rotation: UnitQuaternion::identity(),
            position: Vector3::zeros(),
            velocity: Vector3::zeros(),
            acceleration: Vector3::zeros(),
            angular_velocity: Vector3::zeros(),
            angular_acceleration: Vector3::zeros(),
        }
    }
}

/// The motion of child frame `C` relative to parent frame `P` at one instant; see the
/// [module documentation](self) for the formulas.
///
/// # Example
/// A sensor 0.5 m from the axis of a table spinning at 2 rad/s about its z axis:
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::Vector3;
/// use rotaframe::frames::PointKinematics;
/// use rotaframe::motion::FrameMotion;
/// rotaframe::frame!(Lab: inertial);
/// rotaframe::frame!(Table);
/// let table = FrameMotion::<Lab, Table>::spin(Vector3::z(), 2.0, 0.0).unwrap();
/// let sensor = table.map_point(&PointKinematics::at_rest(Vector3::new(0.5, 0.0, 0.0)));
/// assert_relative_eq!(sensor.velocity, Vector3::new(0.0, 1.0, 0.0));          // ω r
/// assert_relative_eq!(sensor.acceleration, Vector3::new(-2.0, 0.0, 0.0));     // −ω² r
/// ```
pub struct FrameMotion<P: Frame, C: Frame> {
    rotation: UnitQuaternion<f64>,
    position: Vector3<f64>,
    velocity: Vector3<f64>,
    acceleration: Vector3<f64>,
    angular_velocity: Vector3<f64>,
    angular_acceleration: Vector3<f64>,
    frames: PhantomData<fn() -> (P, C)>,
}

impl<P: Frame, C: Frame> Clone for FrameMotion<P, C> {
    fn clone(&self) -> Self {
        *self
    }
}
impl<P: Frame, C: Frame> Copy for FrameMotion<P, C> {}

impl<P: Frame, C: Frame> PartialEq for FrameMotion<P, C> {
    /// Exact equality of every stored component (the quaternions `q` and `−q` compare unequal;
    /// use the `approx` comparisons to compare rotations).
    fn eq(&self, other: &Self) -> bool {
        self.parts() == other.parts()
    }
}

impl<P: Frame, C: Frame> fmt::Debug for FrameMotion<P, C> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let q = &self.rotation;
        f.debug_struct("FrameMotion")
            .field("parent", &P::NAME)
            .field("child", &C::NAME)
            .field("rotation_wxyz", &[q.w, q.i, q.j, q.k])
            .field("position", &self.position.as_slice())
            .field("velocity", &self.velocity.as_slice())
            .field("acceleration", &self.acceleration.as_slice())
            .field("angular_velocity", &self.angular_velocity.as_slice())
            .field("angular_acceleration", &self.angular_acceleration.as_slice())
            .finish()
    }
}

impl<P: Frame, C: Frame> Default for FrameMotion<P, C> {
    fn default() -> Self {
        Self::identity()
    }
}

impl<P: Frame, C: Frame> FrameMotion<P, C> {
    /// C coincides with P and does not move relative to it.
    ///
    /// ```
    /// # use rotaframe::{frames::{Ecef, Ned}, motion::FrameMotion};
    /// assert_eq!(FrameMotion::<Ecef, Ned>::identity().position(), nalgebra::Vector3::zeros());
    /// ```
    #[must_use]
    pub fn identity() -> Self {
        Self::from_parts_unchecked(MotionParts::default())
    }

    /// A motion from its parts, after checking that every part is finite and within its limit
    /// in [`limits`] and that the rotation is a unit quaternion within [`UNIT_NORM_TOLERANCE`]
    /// (it is renormalised unless already unit to within
    /// [`UNIT_AS_GIVEN`](crate::rotation::UNIT_AS_GIVEN)).
    ///
    /// # Errors
    /// [`Error::NonFinite`], [`Error::BeyondLimit`] or [`Error::NotUnitQuaternion`] naming the
    /// part (`rotation`, `position`, `velocity`, `acceleration`, `angular_velocity`,
    /// `angular_acceleration`).
    pub fn from_parts(parts: MotionParts) -> Result<Self> {
        let q = parts.rotation.into_inner();
        // Branch-free acceptance of good parts: every component within its limit (NaN fails
        // the comparison) and a rotation already unit to the last ulps.
        let good = limits::within(&parts.position, limits::MAX_POSITION)
            & limits::within(&parts.velocity, limits::MAX_VELOCITY)
            & limits::within(&parts.acceleration, limits::MAX_ACCELERATION)
            & limits::within(&parts.angular_velocity, limits::MAX_ANGULAR_VELOCITY)
            & limits::within(&parts.angular_acceleration, limits::MAX_ANGULAR_ACCELERATION);
        if good & ((q.norm_squared() - 1.0).abs() <= crate::rotation::UNIT_AS_GIVEN) {
            return Ok(Self::from_parts_unchecked(parts));
        }
        ensure_finite(q.coords.as_slice(), "rotation")?;
        let norm = q.norm();
        if !(norm - 1.0).abs().le(&UNIT_NORM_TOLERANCE) {
            return Err(Error::NotUnitQuaternion { quantity: "rotation", norm, tolerance: UNIT_NORM_TOLERANCE });
        }
        check_parts(&parts)?;
        Ok(Self::from_parts_unchecked(MotionParts { rotation: UnitQuaternion::new_unchecked(q / norm), ..parts }))
    }

    /// A motion from parts the caller has already validated (finite, unit rotation).
    /// Non-finite parts propagate into every result computed from the motion.
    #[must_use]
    #[inline]
    pub fn from_parts_unchecked(parts: MotionParts) -> Self {
        Self {
            rotation: parts.rotation,
            position: parts.position,
            velocity: parts.velocity,
            acceleration: parts.acceleration,
            angular_velocity: parts.angular_velocity,
            angular_acceleration: parts.angular_acceleration,
            frames: PhantomData,
        }
    }

    /// A fixed rotation of C relative to P with coincident origins.
    ///
    /// # Errors
    /// As [`from_parts`](Self::from_parts).
    pub fn from_rotation(rotation: UnitQuaternion<f64>) -> Result<Self> {
        Self::from_parts(MotionParts { rotation, ..MotionParts::default() })
    }

    /// A fixed translation: C's axes parallel to P's, its origin at `position` (resolved in P, m).
    ///
    /// # Errors
    /// As [`from_parts`](Self::from_parts).
    pub fn from_translation(position: Vector3<f64>) -> Result<Self> {
        Self::from_parts(MotionParts { position, ..MotionParts::default() })
    }

    /// Rotation about a fixed axis through P's origin: C is P turned by `angle` (rad) about
    /// `axis` (resolved in P, normalised here), turning at `angular_rate` (rad/s) and
    /// accelerating at `angular_acceleration` (rad/s²) about the same axis.
    ///
    /// # Errors
    /// [`Error::ZeroNorm`] for a zero `axis`; [`Error::NonFinite`] naming the bad argument.
    ///
    /// ```
    /// use rotaframe::{frames::{Ecef, Ned}, motion::FrameMotion};
    /// let m = FrameMotion::<Ecef, Ned>::about_axis(nalgebra::Vector3::new(0.0, 0.0, 3.0), 0.1, 0.2, 0.3).unwrap();
    /// assert_eq!(m.angular_velocity(), nalgebra::Vector3::new(0.0, 0.0, 0.2));
    /// ```
    #[inline(always)]
    pub fn about_axis(axis: Vector3<f64>, angle: f64, angular_rate: f64, angular_acceleration: f64) -> Result<Self> {
        ensure_finite3(&axis, "axis")?;
        ensure_finite1(angle, "angle")?;
        limits::check_scalar(angular_rate, limits::MAX_ANGULAR_VELOCITY, "rad/s", "angular_rate")?;
        limits::check_scalar(angular_acceleration, limits::MAX_ANGULAR_ACCELERATION, "rad/s²", "angular_acceleration")?;
        let unit = Unit::try_new(axis, math::TINY_NORM).ok_or(Error::ZeroNorm { quantity: "axis" })?;
        Ok(Self::from_parts_unchecked(MotionParts {
            rotation: UnitQuaternion::from_axis_angle(&unit, angle),
            angular_velocity: unit.into_inner() * angular_rate,
            angular_acceleration: unit.into_inner() * angular_acceleration,
            ..MotionParts::default()
        }))
    }

    /// A constant-rate spin about a fixed axis through P's origin, at time `time` (s) after the
    /// instant when C and P coincided: angle `angular_rate · time`.
    ///
    /// # Errors
    /// As [`about_axis`](Self::about_axis), and [`Error::NonFinite`] for `time`.
    pub fn spin(axis: Vector3<f64>, angular_rate: f64, time: f64) -> Result<Self> {
        limits::check_scalar(time, limits::MAX_TIME, "s", "time")?;
        limits::check_scalar(angular_rate, limits::MAX_ANGULAR_VELOCITY, "rad/s", "angular_rate")?;
        Self::about_axis(axis, angular_rate * time, angular_rate, 0.0)
    }

    /// All parts, for inspection or for building a modified motion.
    #[must_use]
    #[inline]
    pub fn parts(&self) -> MotionParts {
        MotionParts {
            rotation: self.rotation,
            position: self.position,
            velocity: self.velocity,
            acceleration: self.acceleration,
            angular_velocity: self.angular_velocity,
            angular_acceleration: self.angular_acceleration,
        }
    }

    /// The rotation mapping C-coordinates to P-coordinates.
    #[must_use]
    #[inline]
    pub fn rotation(&self) -> UnitQuaternion<f64> {
        self.rotation
    }

    /// The rotation as a direction-cosine matrix (maps C-coordinates to P-coordinates).
    #[must_use]
    #[inline]
    pub fn rotation_matrix(&self) -> Matrix3<f64> {
        self.rotation.to_rotation_matrix().into_inner()
    }

    /// C's origin relative to P, resolved in P (m).
    #[must_use]
    #[inline]
    pub fn position(&self) -> Vector3<f64> {
        self.position
    }

    /// Velocity of C's origin relative to P, resolved in P (m/s).
    #[must_use]
    #[inline]
    pub fn velocity(&self) -> Vector3<f64> {
        self.velocity
    }

    /// Acceleration of C's origin relative to P, resolved in P (m/s²).
    #[must_use]
    #[inline]
    pub fn acceleration(&self) -> Vector3<f64> {
        self.acceleration
    }

    /// Angular velocity of C relative to P, resolved in P (rad/s).
    #[must_use]
    #[inline]
    pub fn angular_velocity(&self) -> Vector3<f64> {
        self.angular_velocity
    }

    /// Angular acceleration of C relative to P, resolved in P (rad/s²).
    #[must_use]
    #[inline]
    pub fn angular_acceleration(&self) -> Vector3<f64> {
        self.angular_acceleration
    }

    /// Angular velocity of C relative to P, resolved in C (rad/s): `Rᵀ ω`. This is what a gyro
    /// triad fixed in C would read if P were inertial.
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use nalgebra::{UnitQuaternion, Vector3};
    /// use rotaframe::{frames::{Eci, Body}, motion::{FrameMotion, MotionParts}};
    /// let m = FrameMotion::<Eci, Body>::from_parts(MotionParts {
    ///     rotation: UnitQuaternion::from_axis_angle(&Vector3::z_axis(), std::f64::consts::FRAC_PI_2),
    ///     angular_velocity: Vector3::new(0.0, 1.0, 0.0),
    ///     ..MotionParts::default()
    /// }).unwrap();
    /// // P's y axis is C's −x axis after a quarter turn about z.
    /// assert_relative_eq!(m.angular_velocity_in_child(), Vector3::new(1.0, 0.0, 0.0), epsilon = 1e-15);
    /// ```
    #[must_use]
    #[inline]
    pub fn angular_velocity_in_child(&self) -> Vector3<f64> {
        self.rotation.inverse_transform_vector(&self.angular_velocity)
    }

    /// Angular acceleration of C relative to P, resolved in C (rad/s²): `Rᵀ α`.
    #[must_use]
    #[inline]
    pub fn angular_acceleration_in_child(&self) -> Vector3<f64> {
        self.rotation.inverse_transform_vector(&self.angular_acceleration)
    }

    /// Acceleration of C's origin relative to P, resolved in C (m/s²): `Rᵀ a₀`.
    #[must_use]
    #[inline]
    pub fn acceleration_in_child(&self) -> Vector3<f64> {
        self.rotation.inverse_transform_vector(&self.acceleration)
    }

    /// The transport theorem for a point's position, velocity and acceleration relative to C
    /// (resolved in C), through [`map_point_values`].
    #[inline(always)]
    fn transport(&self, r: &Vector3<f64>, v: &Vector3<f64>, a: &Vector3<f64>) -> (Vector3<f64>, Vector3<f64>, Vector3<f64>) {
        let q = self.rotation.as_ref();
        let array = |x: &Vector3<f64>| [x.x, x.y, x.z];
        let parts = [
            array(&self.position),
            array(&self.velocity),
            array(&self.acceleration),
            array(&self.angular_velocity),
            array(&self.angular_acceleration),
        ];
        let k = map_point_values([q.w, q.i, q.j, q.k], parts, array(r), array(v), array(a));
        (Vector3::new(k[0], k[1], k[2]), Vector3::new(k[3], k[4], k[5]), Vector3::new(k[6], k[7], k[8]))
    }

    /// Maps a point given relative to C (resolved in C) to the same point relative to P
    /// (resolved in P), by the transport theorem.
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use nalgebra::Vector3;
    /// use rotaframe::{frames::{Ecef, Ned, PointKinematics}, motion::{FrameMotion, MotionParts}};
    /// let carried = FrameMotion::<Ecef, Ned>::from_parts(MotionParts {
    ///     velocity: Vector3::new(3.0, 0.0, 0.0),
    ///     ..MotionParts::default()
    /// }).unwrap();
    /// let p = carried.map_point(&PointKinematics::new(Vector3::zeros(), Vector3::new(0.0, 4.0, 0.0), Vector3::zeros()));
    /// assert_relative_eq!(p.velocity, Vector3::new(3.0, 4.0, 0.0));
    /// ```
    #[must_use]
    #[inline]
    pub fn map_point(&self, point: &PointKinematics<C>) -> PointKinematics<P> {
        let (position, velocity, acceleration) = self.transport(&point.position, &point.velocity, &point.acceleration);
        PointKinematics::new(position, velocity, acceleration)
    }

    /// Rotates a free vector resolved in C into P's axes (no translation terms).
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use nalgebra::{UnitQuaternion, Vector3};
    /// use rotaframe::{frames::{Ned, Body, FreeVector}, motion::FrameMotion};
    /// let heading_east = FrameMotion::<Ned, Body>::from_rotation(
    ///     UnitQuaternion::from_axis_angle(&Vector3::z_axis(), std::f64::consts::FRAC_PI_2)).unwrap();
    /// let thrust = heading_east.map_vector(&FreeVector::new(100.0, 0.0, 0.0));
    /// assert_relative_eq!(thrust.vector, Vector3::new(0.0, 100.0, 0.0), epsilon = 1e-12);
    /// ```
    #[must_use]
    #[inline]
    pub fn map_vector(&self, vector: &FreeVector<C>) -> FreeVector<P> {
        FreeVector::from_vector(self.rotation * vector.vector)
    }

    /// Composes this motion (C relative to P) with `next` (D relative to C) into D relative to P.
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use nalgebra::Vector3;
    /// use rotaframe::{frames::PointKinematics, motion::FrameMotion};
    /// rotaframe::frame!(Room: inertial);
    /// rotaframe::frame!(Platform);
    /// rotaframe::frame!(Arm);
    /// let platform = FrameMotion::<Room, Platform>::spin(Vector3::z(), 1.0, 0.0).unwrap();
    /// let arm = FrameMotion::<Platform, Arm>::from_translation(Vector3::new(2.0, 0.0, 0.0)).unwrap();
    /// let tip = platform.then(&arm).map_point(&PointKinematics::at_rest(Vector3::zeros()));
    /// assert_relative_eq!(tip.velocity, Vector3::new(0.0, 2.0, 0.0));
    /// ```
    ///
    /// Motions whose frames do not chain do not compile:
    /// ```compile_fail
    /// use rotaframe::{frames::{Eci, Ecef, Ned, Body}, motion::FrameMotion};
    /// let earth = FrameMotion::<Eci, Ecef>::identity();
    /// let body = FrameMotion::<Ned, Body>::identity();
    /// let _ = earth.then(&body); // NED is not ECEF
    /// ```
    #[must_use]
    #[inline(always)]
    pub fn then<D: Frame>(&self, next: &FrameMotion<C, D>) -> FrameMotion<P, D> {
        let r1 = self.rotation.to_rotation_matrix();
        let (position, velocity, acceleration) = self.transport(&next.position, &next.velocity, &next.acceleration);
        let w2 = r1 * next.angular_velocity;
        FrameMotion::from_parts_unchecked(MotionParts {
            rotation: self.rotation * next.rotation,
            position,
            velocity,
            acceleration,
            angular_velocity: self.angular_velocity + w2,
            angular_acceleration: self.angular_acceleration + r1 * next.angular_acceleration + self.angular_velocity.cross(&w2),
        })
    }

    /// The motion of P relative to C (resolved in C); see the module doc for the formulas.
    ///
    /// ```
    /// use approx::assert_relative_eq;
    /// use nalgebra::Vector3;
    /// use rotaframe::{frames::{Eci, Ecef}, motion::FrameMotion};
    /// let earth = FrameMotion::<Eci, Ecef>::spin(Vector3::z(), 7.292115e-5, 3600.0).unwrap();
    /// let back: FrameMotion<Ecef, Eci> = earth.inverse();
    /// assert_relative_eq!(back.angular_velocity(), Vector3::new(0.0, 0.0, -7.292115e-5), epsilon = 1e-20);
    /// ```
    #[must_use]
    #[inline]
    pub fn inverse(&self) -> FrameMotion<C, P> {
        let inv = self.rotation.inverse();
        let rt = inv.to_rotation_matrix();
        let w = &self.angular_velocity;
        let p0 = &self.position;
        let w_x_p0 = w.cross(p0);
        FrameMotion::from_parts_unchecked(MotionParts {
            rotation: inv,
            position: -(rt * p0),
            velocity: rt * (w_x_p0 - self.velocity),
            acceleration: rt
                * (2.0 * w.cross(&self.velocity) + self.angular_acceleration.cross(p0) - w.cross(&w_x_p0) - self.acceleration),
            angular_velocity: -(rt * w),
            angular_acceleration: -(rt * self.angular_acceleration),
        })
    }

    /// The same motion with the frame types forgotten, for code that tracks frames at run time.
    #[must_use]
    #[inline]
    pub fn erase_frames(&self) -> FrameMotion<AnyFrame, AnyFrame> {
        FrameMotion::from_parts_unchecked(self.parts())
    }
}

/// Checks every vector part of a motion against its limit in [`limits`], naming the part.
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `position`, `velocity`,
/// `acceleration`, `angular_velocity` or `angular_acceleration`.
pub fn check_parts(parts: &MotionParts) -> Result<()> {
    limits::check_vector(&parts.position, limits::MAX_POSITION, "m", "position")?;
    limits::check_vector(&parts.velocity, limits::MAX_VELOCITY, "m/s", "velocity")?;
    limits::check_vector(&parts.acceleration, limits::MAX_ACCELERATION, "m/s²", "acceleration")?;
    limits::check_vector(&parts.angular_velocity, limits::MAX_ANGULAR_VELOCITY, "rad/s", "angular_velocity")?;
    limits::check_vector(&parts.angular_acceleration, limits::MAX_ANGULAR_ACCELERATION, "rad/s²", "angular_acceleration")
}

impl FrameMotion<AnyFrame, AnyFrame> {
    /// Asserts the frames of a run-time-labelled motion. The caller is responsible for the
    /// labels being right; this is the one place where the type check is bypassed.
    ///
    /// ```
    /// use rotaframe::{frames::{AnyFrame, Ecef, Ned}, motion::FrameMotion};
    /// let m: FrameMotion<Ecef, Ned> = FrameMotion::<AnyFrame, AnyFrame>::identity().assume_frames();
    /// # let _ = m;
    /// ```
    #[must_use]
    #[inline]
    pub fn assume_frames<P: Frame, C: Frame>(&self) -> FrameMotion<P, C> {
        FrameMotion::from_parts_unchecked(self.parts())
    }
}

impl<P: Frame, C: Frame> approx::AbsDiffEq for FrameMotion<P, C> {
    type Epsilon = f64;
    fn default_epsilon() -> f64 {
        f64::EPSILON
    }
    /// Compares rotations as rotations (`q` and `−q` are equal) and every vector componentwise.
    fn abs_diff_eq(&self, other: &Self, epsilon: f64) -> bool {
        let qa = self.rotation.into_inner().coords;
        let qb = other.rotation.into_inner().coords;
        (qa.abs_diff_eq(&qb, epsilon) || qa.abs_diff_eq(&-qb, epsilon))
            && self.position.abs_diff_eq(&other.position, epsilon)
            && self.velocity.abs_diff_eq(&other.velocity, epsilon)
            && self.acceleration.abs_diff_eq(&other.acceleration, epsilon)
            && self.angular_velocity.abs_diff_eq(&other.angular_velocity, epsilon)
            && self.angular_acceleration.abs_diff_eq(&other.angular_acceleration, epsilon)
    }
}

impl<P: Frame, C: Frame> approx::RelativeEq for FrameMotion<P, C> {
    fn default_max_relative() -> f64 {
        f64::EPSILON
    }
    fn relative_eq(&self, other: &Self, epsilon: f64, max_relative: f64) -> bool {
        let qa = self.rotation.into_inner().coords;
        let qb = other.rotation.into_inner().coords;
        (qa.relative_eq(&qb, epsilon, max_relative) || qa.relative_eq(&-qb, epsilon, max_relative))
            && self.position.relative_eq(&other.position, epsilon, max_relative)
            && self.velocity.relative_eq(&other.velocity, epsilon, max_relative)
            && self.acceleration.relative_eq(&other.acceleration, epsilon, max_relative)
            && self.angular_velocity.relative_eq(&other.angular_velocity, epsilon, max_relative)
            && self.angular_acceleration.relative_eq(&other.angular_acceleration, epsilon, max_relative)
    }
}

/// The transport theorem of [`FrameMotion::map_point`] on plain numbers, for batch loops that
/// keep motions and points in arrays: the motion's rotation (`w, x, y, z`, unit), its
/// position, velocity, acceleration, angular velocity and angular acceleration (resolved in
/// the parent), and the point's position, velocity and acceleration relative to (and
/// resolved in) the child; returns the point's position, velocity and acceleration relative
/// to the parent, nine numbers. `map_point` itself runs on it (the same bits), written on
/// scalars so that a loop over it keeps everything in registers.
///
/// ```
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::{frames::{AnyFrame, PointKinematics}, motion::{map_point_values, FrameMotion, MotionParts}};
/// let q = UnitQuaternion::from_euler_angles(0.1, -0.2, 0.3);
/// let parts = MotionParts { rotation: q, angular_velocity: Vector3::new(0.0, 0.0, 2.0), ..MotionParts::default() };
/// let motion = FrameMotion::<AnyFrame, AnyFrame>::from_parts(parts).unwrap();
/// let point = PointKinematics::new(Vector3::new(1.0, 0.0, 0.0), Vector3::zeros(), Vector3::zeros());
/// let k = motion.map_point(&point);
/// let z = [0.0; 3];
/// let values = map_point_values([q.w, q.i, q.j, q.k], [z, z, z, [0.0, 0.0, 2.0], z], [1.0, 0.0, 0.0], z, z);
/// assert_eq!(values[3..6], [k.velocity.x, k.velocity.y, k.velocity.z]);
/// ```
#[must_use]
#[inline(always)]
pub fn map_point_values(
    rotation: [f64; 4],
    parts: [[f64; 3]; 5],
    position: [f64; 3],
    velocity: [f64; 3],
    acceleration: [f64; 3],
) -> [f64; 9] {
    let [w, i, j, k] = rotation;
    let two = 2.0;
    // The rotation matrix as nalgebra's `to_rotation_matrix` forms it.
    let (ww, ii, jj, kk) = (w * w, i * i, j * j, k * k);
    let (ij, wk, wj) = (i * j * two, w * k * two, w * j * two);
    let (ik, jk, wi) = (i * k * two, j * k * two, w * i * two);
    let m = [[ww + ii - jj - kk, ij - wk, wj + ik], [wk + ij, ww - ii + jj - kk, jk - wi], [ik - wj, wi + jk, ww - ii - jj + kk]];
    // R x as nalgebra's matrix-vector product sums it, column by column.
    let rotate = |x: [f64; 3]| -> [f64; 3] { core::array::from_fn(|r| x[0] * m[r][0] + x[1] * m[r][1] + x[2] * m[r][2]) };
    let cross = |a: [f64; 3], b: [f64; 3]| -> [f64; 3] {
        [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]]
    };
    let (rr, rv, ra) = (rotate(position), rotate(velocity), rotate(acceleration));
    let [p0, v0, a0, omega, alpha] = parts;
    let w_x_rr = cross(omega, rr);
    let (w_x_rv, al_x_rr, w_x_w_x_rr) = (cross(omega, rv), cross(alpha, rr), cross(omega, w_x_rr));
    core::array::from_fn(|n| {
        let c = n % 3;
        match n / 3 {
            0 => p0[c] + rr[c],
            1 => v0[c] + rv[c] + w_x_rr[c],
            _ => a0[c] + ra[c] + two * w_x_rv[c] + al_x_rr[c] + w_x_w_x_rr[c],
        }
    })
}
