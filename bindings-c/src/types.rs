//! Plain C structs, passed by pointer, and their conversions to and from the core's types.

use rotaframe::earth::{EarthModel, EarthModelConstants, Geodetic};
use rotaframe::frames::{AnyFrame, PointKinematics};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra::{Dim, Matrix, RawStorage, UnitQuaternion, Vector3};

use crate::status::Fallible;

/// Writes a matrix row-major (C order: `o[i·columns + j] = m[(i, j)]`) into `o`: the one
/// writer of every matrix output of the C interface.
#[inline]
pub(crate) fn put_row_major<R: Dim, C: Dim, S: RawStorage<f64, R, C>>(o: &mut [f64], m: &Matrix<f64, R, C, S>) {
    let columns = m.ncols();
    for i in 0..m.nrows() {
        for j in 0..columns {
            o[i * columns + j] = m[(i, j)];
        }
    }
}

/// A 3-vector.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_vec3 {
    /// First component.
    pub x: f64,
    /// Second component.
    pub y: f64,
    /// Third component.
    pub z: f64,
}

/// A Hamilton quaternion, scalar first.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_quat {
    /// Scalar part.
    pub w: f64,
    /// i component.
    pub x: f64,
    /// j component.
    pub y: f64,
    /// k component.
    pub z: f64,
}

/// The motion of a child frame C relative to a parent frame P: `rotation` maps C-coordinates
/// to P-coordinates; every vector is resolved in P.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_frame_motion {
    /// Unit quaternion mapping child coordinates to parent coordinates.
    pub rotation: rf_quat,
    /// Child origin relative to the parent (m).
    pub position: rf_vec3,
    /// Child origin velocity relative to the parent (m/s).
    pub velocity: rf_vec3,
    /// Child origin acceleration relative to the parent (m/s²).
    pub acceleration: rf_vec3,
    /// Angular velocity of the child relative to the parent (rad/s).
    pub angular_velocity: rf_vec3,
    /// Angular acceleration of the child relative to the parent (rad/s²).
    pub angular_acceleration: rf_vec3,
}

/// Position, velocity and acceleration of a point relative to and resolved in one frame.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_point_kinematics {
    /// Position (m).
    pub position: rf_vec3,
    /// Velocity (m/s).
    pub velocity: rf_vec3,
    /// Acceleration (m/s²).
    pub acceleration: rf_vec3,
}

/// The apparent accelerations of a point moving relative to a rotating frame, each resolved in
/// that frame (m/s²).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_apparent_terms {
    /// −a₀.
    pub translational: rf_vec3,
    /// −2 ω × v.
    pub coriolis: rf_vec3,
    /// −ω × (ω × r).
    pub centrifugal: rf_vec3,
    /// −α × r.
    pub euler: rf_vec3,
    /// Sum of the four.
    pub total: rf_vec3,
}

/// Geodetic latitude and longitude (rad) and ellipsoidal height (m).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_geodetic {
    /// Geodetic latitude (rad), in [−π/2, π/2].
    pub latitude: f64,
    /// Longitude (rad), east positive.
    pub longitude: f64,
    /// Ellipsoidal height (m), positive above the ellipsoid.
    pub height: f64,
}

/// z-y-x Euler angles (rad): body to local level `Rz(yaw) Ry(pitch) Rx(roll)`.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_euler {
    /// Yaw (rad).
    pub yaw: f64,
    /// Pitch (rad).
    pub pitch: f64,
    /// Roll (rad).
    pub roll: f64,
}

/// The constants of a reference ellipsoid with its normal gravity field. Obtain one from
/// `rf_earth_model_wgs84`, `rf_earth_model_grs80`, `rf_earth_model_from_defining_constants` or
/// `rf_earth_model_custom`; functions validate it on every call (ranges, and the plausibility
/// of the gravity constants). Zero-initialised (`= {0}`) it means WGS 84.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_earth_model {
    /// Semi-major axis (m).
    pub semi_major_axis: f64,
    /// Flattening.
    pub flattening: f64,
    /// Geocentric gravitational constant (m³/s²).
    pub gm: f64,
    /// Rotation rate (rad/s).
    pub rotation_rate: f64,
    /// Normal gravity at the equator (m/s²).
    pub gamma_equator: f64,
    /// Normal gravity at the poles (m/s²).
    pub gamma_pole: f64,
    /// Dynamical form factor J2.
    pub j2: f64,
    /// Somigliana's constant k.
    pub somigliana_k: f64,
}

impl From<rf_vec3> for Vector3<f64> {
    fn from(v: rf_vec3) -> Self {
        Vector3::new(v.x, v.y, v.z)
    }
}

impl From<Vector3<f64>> for rf_vec3 {
    fn from(v: Vector3<f64>) -> Self {
        Self { x: v.x, y: v.y, z: v.z }
    }
}

impl From<&UnitQuaternion<f64>> for rf_quat {
    fn from(q: &UnitQuaternion<f64>) -> Self {
        Self { w: q.w, x: q.i, y: q.j, z: q.k }
    }
}

impl rf_quat {
    /// The validated unit quaternion (renormalised within the core's tolerance).
    pub fn to_core(self, quantity: &'static str) -> Fallible<UnitQuaternion<f64>> {
        Ok(rotaframe::rotation::quaternion_from_wxyz([self.w, self.x, self.y, self.z], quantity)?)
    }
}

impl rf_frame_motion {
    /// The validated core motion.
    pub fn to_core(&self) -> Fallible<FrameMotion<AnyFrame, AnyFrame>> {
        Ok(FrameMotion::from_parts(self.to_core_rotation_checked()?.parts())?)
    }
}

impl rf_frame_motion {
    /// The core motion with only the rotation validated. For functions whose outputs every
    /// vector part reaches, which check the outputs and call [`to_core`](Self::to_core) to name
    /// a bad part when they are not finite.
    pub fn to_core_rotation_checked(&self) -> Fallible<FrameMotion<AnyFrame, AnyFrame>> {
        Ok(FrameMotion::from_parts_unchecked(MotionParts {
            rotation: self.rotation.to_core("rotation")?,
            position: self.position.into(),
            velocity: self.velocity.into(),
            acceleration: self.acceleration.into(),
            angular_velocity: self.angular_velocity.into(),
            angular_acceleration: self.angular_acceleration.into(),
        }))
    }
}

impl<P: rotaframe::frames::Frame, C: rotaframe::frames::Frame> From<&FrameMotion<P, C>> for rf_frame_motion {
    fn from(m: &FrameMotion<P, C>) -> Self {
        let p = m.parts();
        Self {
            rotation: (&p.rotation).into(),
            position: p.position.into(),
            velocity: p.velocity.into(),
            acceleration: p.acceleration.into(),
            angular_velocity: p.angular_velocity.into(),
            angular_acceleration: p.angular_acceleration.into(),
        }
    }
}

impl rf_point_kinematics {
    /// The validated core point.
    pub fn to_core(&self) -> Fallible<PointKinematics<AnyFrame>> {
        Ok(PointKinematics::try_new(self.position.into(), self.velocity.into(), self.acceleration.into())?)
    }
}

impl<F: rotaframe::frames::Frame> From<&PointKinematics<F>> for rf_point_kinematics {
    fn from(p: &PointKinematics<F>) -> Self {
        Self { position: p.position.into(), velocity: p.velocity.into(), acceleration: p.acceleration.into() }
    }
}

impl<B: rotaframe::frames::Frame> From<&rotaframe::apparent::ApparentAcceleration<B>> for rf_apparent_terms {
    fn from(t: &rotaframe::apparent::ApparentAcceleration<B>) -> Self {
        Self {
            translational: t.translational.into(),
            coriolis: t.coriolis.into(),
            centrifugal: t.centrifugal.into(),
            euler: t.euler.into(),
            total: t.total.into(),
        }
    }
}

impl From<rf_geodetic> for Geodetic {
    fn from(g: rf_geodetic) -> Self {
        Geodetic::new(g.latitude, g.longitude, g.height)
    }
}

impl From<Geodetic> for rf_geodetic {
    fn from(g: Geodetic) -> Self {
        Self { latitude: g.latitude, longitude: g.longitude, height: g.height }
    }
}

impl rf_earth_model {
    /// The validated core model, read in place (the struct has the layout of the core's
    /// `EarthModelConstants`, checked at compile time below).
    pub fn to_core(&self) -> Fallible<EarthModel> {
        // SAFETY: same size, alignment and field offsets (asserted below); all fields are f64.
        let constants = unsafe { &*core::ptr::from_ref(self).cast::<EarthModelConstants>() };
        match EarthModel::from_constants(constants) {
            Ok(model) => Ok(model),
            // The zero-initialised struct is WGS 84, as an omitted model is everywhere else.
            Err(_) if *self == Self::default() => Ok(rotaframe::earth::WGS84),
            Err(e) => Err(e.into()),
        }
    }
}

impl From<&EarthModel> for rf_earth_model {
    fn from(m: &EarthModel) -> Self {
        let c = m.constants();
        Self {
            semi_major_axis: c.semi_major_axis,
            flattening: c.flattening,
            gm: c.gm,
            rotation_rate: c.rotation_rate,
            gamma_equator: c.gamma_equator,
            gamma_pole: c.gamma_pole,
            j2: c.j2,
            somigliana_k: c.somigliana_k,
        }
    }
}

/// Confirms at compile time that the C vector type is laid out as the core's `[f64; 3]` and
/// `Geodetic`, so batch functions can hand C arrays to the core without copying.
const _: () = {
    assert!(core::mem::size_of::<rf_vec3>() == core::mem::size_of::<[f64; 3]>());
    assert!(core::mem::align_of::<rf_vec3>() == core::mem::align_of::<[f64; 3]>());
    assert!(core::mem::size_of::<rf_geodetic>() == core::mem::size_of::<Geodetic>());
    assert!(core::mem::align_of::<rf_geodetic>() == core::mem::align_of::<Geodetic>());
    assert!(core::mem::size_of::<rf_earth_model>() == core::mem::size_of::<EarthModelConstants>());
    assert!(core::mem::align_of::<rf_earth_model>() == core::mem::align_of::<EarthModelConstants>());
    assert!(
        core::mem::offset_of!(rf_earth_model, semi_major_axis) == core::mem::offset_of!(EarthModelConstants, semi_major_axis)
    );
    assert!(core::mem::offset_of!(rf_earth_model, flattening) == core::mem::offset_of!(EarthModelConstants, flattening));
    assert!(core::mem::offset_of!(rf_earth_model, gm) == core::mem::offset_of!(EarthModelConstants, gm));
    assert!(core::mem::offset_of!(rf_earth_model, rotation_rate) == core::mem::offset_of!(EarthModelConstants, rotation_rate));
    assert!(core::mem::offset_of!(rf_earth_model, gamma_equator) == core::mem::offset_of!(EarthModelConstants, gamma_equator));
    assert!(core::mem::offset_of!(rf_earth_model, gamma_pole) == core::mem::offset_of!(EarthModelConstants, gamma_pole));
    assert!(core::mem::offset_of!(rf_earth_model, j2) == core::mem::offset_of!(EarthModelConstants, j2));
    assert!(core::mem::offset_of!(rf_earth_model, somigliana_k) == core::mem::offset_of!(EarthModelConstants, somigliana_k));
};
