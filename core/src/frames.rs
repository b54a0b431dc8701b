//! Typed reference frames and the quantities that live in them.
//!
//! A frame is a zero-sized marker type implementing [`Frame`]; frames that do not rotate or
//! accelerate (Newton's laws hold in them without apparent forces) also implement
//! [`InertialFrame`]. Quantities carry their frame as a type parameter, so that passing a
//! quantity in the wrong frame is a compile error rather than a silently wrong navigation
//! solution.
//!
//! Two words are kept apart everywhere in rotaframe:
//!
//! * **relative to** frame F: whose motion is described (positions from F's origin, velocities
//!   and accelerations as time derivatives taken by an observer fixed in F);
//! * **resolved in** frame F: which axes the components are written in.
//!
//! [`PointKinematics<F>`] holds a point's position, velocity and acceleration relative to *and*
//! resolved in F. [`FreeVector<F>`] is a direction-like quantity (force, angular rate, a
//! displacement between two points) resolved in F; it has no origin, so only rotation acts on it.
//!
//! Built-in frames: [`Eci`] (Earth-centred inertial), [`Ecef`] (Earth-centred Earth-fixed),
//! [`Ned`] and [`Enu`] (local-level north-east-down and east-north-up), [`Body`] (a vehicle's
//! body axes). Define your own in one line with [`frame!`](crate::frame):
//!
//! ```
//! rotaframe::frame!(
//!     /// Axes of a gyro triad on its mounting block.
//!     pub GyroBlock
//! );
//! rotaframe::frame!(
//!     /// A laboratory frame treated as inertial for a short turntable test.
//!     pub Lab: inertial
//! );
//! use rotaframe::frames::{Frame, InertialFrame};
//! fn needs_inertial<I: InertialFrame>() -> &'static str { I::NAME }
//! assert_eq!(needs_inertial::<Lab>(), "Lab");
//! assert_eq!(GyroBlock::NAME, "GyroBlock");
//! ```
//!
//! A quantity in the wrong frame does not compile. This compiles:
//!
//! ```
//! use rotaframe::frames::{Ecef, FreeVector};
//! fn takes_ecef(v: FreeVector<Ecef>) -> f64 { v.vector.norm() }
//! let v = FreeVector::<Ecef>::new(1.0, 2.0, 2.0);
//! assert_eq!(takes_ecef(v), 3.0);
//! ```
//!
//! and this does not, because the vector is resolved in NED:
//!
//! ```compile_fail
//! use rotaframe::frames::{Ecef, Ned, FreeVector};
//! fn takes_ecef(v: FreeVector<Ecef>) -> f64 { v.vector.norm() }
//! let v = FreeVector::<Ned>::new(1.0, 2.0, 2.0);
//! takes_ecef(v);
//! ```

use core::fmt;
use core::marker::PhantomData;

use nalgebra::Vector3;

use crate::error::Result;

/// A reference frame marker. Implemented by zero-sized types; see [`frame!`](crate::frame).
pub trait Frame: Copy + Default + fmt::Debug + Send + Sync + 'static {
    /// Short human-readable name of the frame, used in messages and `Debug` output.
    const NAME: &'static str;
}

/// A frame in which Newton's laws hold without apparent forces: it neither rotates nor
/// accelerates relative to the distant stars (to the accuracy the user needs).
///
/// Functions that are only valid relative to an inertial frame, such as
/// [`apparent::apparent_acceleration`](crate::apparent::apparent_acceleration), require it.
pub trait InertialFrame: Frame {}

/// Defines a frame marker type in one line.
///
/// `frame!(pub Name)` defines an ordinary frame; `frame!(pub Name: inertial)` also marks it
/// inertial. Doc comments and other attributes may precede the visibility.
///
/// ```
/// rotaframe::frame!(pub(crate) Mast);
/// rotaframe::frame!(pub LaunchInertial: inertial);
/// # use rotaframe::frames::Frame;
/// assert_eq!(Mast::NAME, "Mast");
/// ```
#[macro_export]
macro_rules! frame {
    ($(#[$meta:meta])* $vis:vis $name:ident : inertial) => {
        $crate::frame!($(#[$meta])* $vis $name);
        impl $crate::frames::InertialFrame for $name {}
    };
    ($(#[$meta:meta])* $vis:vis $name:ident) => {
        $(#[$meta])*
        #[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Hash)]
        $vis struct $name;
        impl $crate::frames::Frame for $name {
            const NAME: &'static str = stringify!($name);
        }
    };
}

frame!(
    /// Earth-centred inertial frame: origin at the Earth's centre of mass, z along the Earth's
    /// rotation axis, x and y fixed relative to the stars, coinciding with [`Ecef`] at the epoch
    /// chosen for the Earth-rotation angle. It ignores precession, nutation and polar motion,
    /// which suits inertial navigation over hours to days.
    pub Eci: inertial
);
frame!(
    /// Earth-centred Earth-fixed frame: origin at the Earth's centre of mass, z along the
    /// rotation axis (towards the north pole), x through the equator at the reference meridian,
    /// y completing a right-handed triad. It rotates relative to [`Eci`].
    pub Ecef
);
frame!(
    /// Geocentric Celestial Reference System: origin at the Earth's centre of mass, axes fixed
    /// relative to the extragalactic sources of the ICRS (IAU 2000 Resolution B1.3). The
    /// inertial frame of orbit and long-range trajectory work; see
    /// [`earth::celestial`](crate::earth::celestial) for its relation to [`Itrs`]. Unlike
    /// [`Eci`], it does not follow the Earth's precessing, nutating axis.
    pub Gcrs: inertial
);
frame!(
    /// International Terrestrial Reference System: the Earth-fixed frame realised by the ITRF,
    /// related to [`Gcrs`] by precession-nutation, the Earth Rotation Angle and polar motion
    /// ([`earth::celestial`](crate::earth::celestial)). For navigation, [`Ecef`] (WGS 84) and
    /// ITRS agree to centimetres.
    pub Itrs
);
frame!(
    /// Local-level north-east-down frame: x north, y east, z down along the ellipsoidal normal.
    /// Its origin is set by the motion that defines it (usually a vehicle's navigation point).
    pub Ned
);
frame!(
    /// Local-level east-north-up frame: x east, y north, z up along the ellipsoidal normal.
    pub Enu
);
frame!(
    /// A vehicle's body frame. rotaframe attaches no axis convention to it; the common aerospace
    /// choice is x forward, y right, z down.
    pub Body
);
frame!(
    /// A frame whose identity is tracked at run time by the caller rather than by the type
    /// system. The Python and C bindings use it, checking frame labels themselves.
    pub AnyFrame
);

/// A free vector (direction, force, angular rate, displacement) resolved in frame `F`.
///
/// ```
/// use rotaframe::frames::{FreeVector, Ned};
/// let g = FreeVector::<Ned>::new(0.0, 0.0, 9.8);
/// assert_eq!(g.vector.z, 9.8);
/// ```
pub struct FreeVector<F: Frame> {
    /// Components resolved in `F`, in the quantity's SI unit.
    pub vector: Vector3<f64>,
    frame: PhantomData<fn() -> F>,
}

impl<F: Frame> FreeVector<F> {
    /// Wraps components already resolved in `F`.
    #[must_use]
    pub const fn new(x: f64, y: f64, z: f64) -> Self {
        Self::from_vector(Vector3::new(x, y, z))
    }

    /// Wraps an nalgebra vector whose components are resolved in `F`.
    #[must_use]
    pub const fn from_vector(vector: Vector3<f64>) -> Self {
        Self { vector, frame: PhantomData }
    }

    /// Like [`from_vector`](Self::from_vector) but rejects NaN or infinite components and
    /// magnitudes beyond [`MAX_FREE_VECTOR`](crate::limits::MAX_FREE_VECTOR).
    ///
    /// # Errors
    /// [`Error::NonFinite`](crate::Error::NonFinite) or
    /// [`Error::BeyondLimit`](crate::Error::BeyondLimit) naming `quantity`.
    pub fn try_from_vector(vector: Vector3<f64>, quantity: &'static str) -> Result<Self> {
        crate::limits::check_vector(&vector, crate::limits::MAX_FREE_VECTOR, "(SI units)", quantity)?;
        Ok(Self::from_vector(vector))
    }
}

impl<F: Frame> Clone for FreeVector<F> {
    fn clone(&self) -> Self {
        *self
    }
}
impl<F: Frame> Copy for FreeVector<F> {}
impl<F: Frame> PartialEq for FreeVector<F> {
    fn eq(&self, other: &Self) -> bool {
        self.vector == other.vector
    }
}
impl<F: Frame> fmt::Debug for FreeVector<F> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "FreeVector<{}>({}, {}, {})", F::NAME, self.vector.x, self.vector.y, self.vector.z)
    }
}

/// Position, velocity and acceleration of a point relative to and resolved in frame `F`
/// (metres, m/s, m/s²). Velocity and acceleration are time derivatives taken by an observer
/// fixed in `F`.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::frames::{Body, PointKinematics};
/// let antenna = PointKinematics::<Body>::at_rest(Vector3::new(1.2, 0.0, -0.4));
/// assert_eq!(antenna.velocity, Vector3::zeros());
/// ```
pub struct PointKinematics<F: Frame> {
    /// Position relative to `F`'s origin, resolved in `F` (m).
    pub position: Vector3<f64>,
    /// Velocity relative to `F`, resolved in `F` (m/s).
    pub velocity: Vector3<f64>,
    /// Acceleration relative to `F`, resolved in `F` (m/s²).
    pub acceleration: Vector3<f64>,
    frame: PhantomData<fn() -> F>,
}

impl<F: Frame> PointKinematics<F> {
    /// A point with the given position, velocity and acceleration relative to and resolved in `F`.
    #[must_use]
    pub const fn new(position: Vector3<f64>, velocity: Vector3<f64>, acceleration: Vector3<f64>) -> Self {
        Self { position, velocity, acceleration, frame: PhantomData }
    }

    /// A point fixed in `F` at `position`.
    #[must_use]
    pub fn at_rest(position: Vector3<f64>) -> Self {
        Self::new(position, Vector3::zeros(), Vector3::zeros())
    }

    /// Like [`new`](Self::new) but rejects NaN or infinite components and components beyond
    /// the [`limits`](crate::limits) ([`MAX_POSITION`](crate::limits::MAX_POSITION),
    /// [`MAX_VELOCITY`](crate::limits::MAX_VELOCITY),
    /// [`MAX_ACCELERATION`](crate::limits::MAX_ACCELERATION)), naming the first bad part
    /// (`position`, `velocity` or `acceleration`).
    ///
    /// # Errors
    /// [`Error::NonFinite`](crate::Error::NonFinite) or
    /// [`Error::BeyondLimit`](crate::Error::BeyondLimit).
    pub fn try_new(position: Vector3<f64>, velocity: Vector3<f64>, acceleration: Vector3<f64>) -> Result<Self> {
        let point = Self::new(position, velocity, acceleration);
        point.validate()?;
        Ok(point)
    }

    /// Checks the point as [`try_new`](Self::try_new) does.
    ///
    /// # Errors
    /// As [`try_new`](Self::try_new).
    #[inline]
    pub fn validate(&self) -> Result<()> {
        use crate::limits::{MAX_ACCELERATION, MAX_POSITION, MAX_VELOCITY, check_vector};
        check_vector(&self.position, MAX_POSITION, "m", "position")?;
        check_vector(&self.velocity, MAX_VELOCITY, "m/s", "velocity")?;
        check_vector(&self.acceleration, MAX_ACCELERATION, "m/s²", "acceleration")
    }
}

impl<F: Frame> Clone for PointKinematics<F> {
    fn clone(&self) -> Self {
        *self
    }
}
impl<F: Frame> Copy for PointKinematics<F> {}
impl<F: Frame> PartialEq for PointKinematics<F> {
    fn eq(&self, other: &Self) -> bool {
        self.position == other.position && self.velocity == other.velocity && self.acceleration == other.acceleration
    }
}
impl<F: Frame> fmt::Debug for PointKinematics<F> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("PointKinematics")
            .field("frame", &F::NAME)
            .field("position", &self.position.as_slice())
            .field("velocity", &self.velocity.as_slice())
            .field("acceleration", &self.acceleration.as_slice())
            .finish()
    }
}

impl<F: Frame> approx::AbsDiffEq for PointKinematics<F> {
    type Epsilon = f64;
    fn default_epsilon() -> f64 {
        f64::EPSILON
    }
    fn abs_diff_eq(&self, other: &Self, epsilon: f64) -> bool {
        self.position.abs_diff_eq(&other.position, epsilon)
            && self.velocity.abs_diff_eq(&other.velocity, epsilon)
            && self.acceleration.abs_diff_eq(&other.acceleration, epsilon)
    }
}

impl<F: Frame> approx::RelativeEq for PointKinematics<F> {
    fn default_max_relative() -> f64 {
        f64::EPSILON
    }
    fn relative_eq(&self, other: &Self, epsilon: f64, max_relative: f64) -> bool {
        self.position.relative_eq(&other.position, epsilon, max_relative)
            && self.velocity.relative_eq(&other.velocity, epsilon, max_relative)
            && self.acceleration.relative_eq(&other.acceleration, epsilon, max_relative)
    }
}
