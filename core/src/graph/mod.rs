//! Frame graphs over time: a system's frames described once (Earth, a site, a vehicle, a
//! gimbal, its sensors), and the motion of any frame relative to any other at any time.
//!
//! A graph is a tree. Each frame but the root hangs from one parent by an **edge**, the
//! motion of the frame relative to its parent as a function of time `t` (seconds on one time
//! scale of the user's choosing):
//!
//! | edge | motion of the child relative to the parent |
//! |---|---|
//! | [`Fixed`] | a constant rotation and offset (a sensor mount, a lever arm) |
//! | [`Spin`] | rotation about a fixed axis: angle `θ₀ + ω t + ½ α t²`, rate `ω + α t`, angular acceleration `α` |
//! | [`EarthRotation`] | ECEF relative to the inertial frame: [`earth_motion`](crate::earth::earth_motion) at `t` seconds after an epoch given by its rotation angle or its two-part UT1 Julian date |
//! | [`IersEarth`] (with `alloc`) | ITRS relative to GCRS by the full IERS model ([`itrs_motion`](crate::earth::celestial::itrs_motion)), `t` in seconds of TT after a stated epoch, with Earth orientation data |
//! | [`Site`] | a local-level frame (NED or ENU) at a fixed geodetic point, relative to ECEF |
//! | sampled | a logged motion interpolated by [`SampledMotion`](crate::nav::SampledMotion) (all six kinematic quantities, no extrapolation) |
//! | function | the user's own (a closure of time) |
//!
//! # The motion between two frames
//!
//! Let `A` be the lowest common ancestor of frames `p` and `c`. Composing the edges from `A`
//! down to `c` with [`then`](crate::motion::FrameMotion::then) gives `c` relative to `A`
//! (`M_Ac`), likewise `M_Ap`; the motion of `c` relative to `p` is then
//!
//! ```text
//! M_pc = M_Ap⁻¹ · M_Ac
//! ```
//!
//! with the inverse and composition of [`motion`](crate::motion) (no new formula). When `p`
//! is an ancestor of `c` the result is the hand-written chain `e₁.then(e₂)…then(eₖ)`,
//! composed in the same order, except that a trailing run of constant edges (a sensor's
//! mounts) is composed once per query ([`Path::fold`]): the two agree to a few ulps (bit for
//! bit when the chain does not end in two or more constant edges).
//!
//! Apparent accelerations in a frame need its motion relative to an inertial frame: the
//! graph's root, when the graph is declared inertial ([`FrameGraph`]).
//!
//! This module is `no_std` and allocation-free: [`Path`] walks any [`FrameTree`] (the C
//! interface keeps its frames in caller-provided storage). With the `alloc` feature (part of
//! `std`) [`FrameGraph`] holds named frames; with `std`, graphs save to and load from a TOML
//! file ([`FrameGraph::to_toml`]).
//!
//! ```
//! # #[cfg(feature = "alloc")]
//! # fn main() -> Result<(), Box<dyn std::error::Error>> {
//! use approx::assert_relative_eq;
//! use nalgebra::{UnitQuaternion, Vector3};
//! use rotaframe::earth::{Geodetic, WGS84};
//! use rotaframe::graph::{EarthRotation, Fixed, FrameGraph, LocalAxes, Site, Spin};
//! let mut g = FrameGraph::new("inertial", true);
//! g.add_earth("ecef", "inertial", EarthRotation::with_angle(WGS84, 0.0)?)?;
//! g.add_site("pad", "ecef", Site::new(WGS84, Geodetic::from_degrees(28.5, -80.6, 3.0), LocalAxes::Ned)?)?;
//! g.add_spin("turntable", "pad", Spin::new(Vector3::z(), 2.0, 0.0, 0.0)?)?;
//! g.add_fixed("accel", "turntable", Fixed::new(UnitQuaternion::identity(), Vector3::new(0.5, 0.0, 0.0))?)?;
//! // The accelerometer relative to the pad: 0.5 m from the axis, moving at 1 m/s.
//! let m = g.motion("pad", "accel", 10.0)?;
//! assert_relative_eq!(m.velocity().norm(), 1.0, max_relative = 1e-14);
//! # Ok(())
//! # }
//! # #[cfg(not(feature = "alloc"))]
//! # fn main() {}
//! ```

#[cfg(feature = "std")]
pub mod config;
#[cfg(feature = "alloc")]
mod error;
mod evaluate;
#[cfg(feature = "alloc")]
mod iers;
#[cfg(feature = "alloc")]
mod sampled;
#[cfg(feature = "alloc")]
mod tree;

#[cfg(feature = "alloc")]
pub use error::GraphError;
pub use evaluate::EdgeCaches;
#[cfg(feature = "alloc")]
pub use iers::IersEarth;
#[cfg(feature = "alloc")]
pub use sampled::{SampledEdge, SamplesKind};
#[cfg(feature = "alloc")]
pub use tree::{Declared, Edge, EdgeFunction, FrameGraph, MotionSource};

use core::fmt;

use nalgebra::{Unit, UnitQuaternion, Vector3};

use crate::earth::{self, EarthModel, Geodetic};
use crate::error::{Error, Result, ensure_finite1};
use crate::frames::AnyFrame;
use crate::limits;
use crate::math;
use crate::motion::{FrameMotion, MotionParts};

/// A motion between frames whose identity the graph tracks at run time.
pub type Motion = FrameMotion<AnyFrame, AnyFrame>;

/// The index of a frame in its graph (the root is 0 in a [`FrameGraph`]).
pub type FrameId = usize;

/// Deepest supported frame tree (edges from the root to any frame): paths are held in fixed
/// arrays so that finding one allocates nothing.
pub const MAX_DEPTH: usize = 32;

/// A constant rotation and offset of the child relative to the parent: the child's origin at
/// `position` (resolved in the parent, m), its axes rotated by `rotation` (child to parent).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Fixed {
    motion: Motion,
}

impl Fixed {
    /// A fixed mount.
    ///
    /// # Errors
    /// As [`FrameMotion::from_parts`] (a bad or non-unit rotation, an offset beyond
    /// [`MAX_POSITION`](limits::MAX_POSITION)), naming `rotation` or `position`.
    pub fn new(rotation: UnitQuaternion<f64>, position: Vector3<f64>) -> Result<Self> {
        Ok(Self { motion: FrameMotion::from_parts(MotionParts { rotation, position, ..MotionParts::default() })? })
    }

    /// The child-to-parent rotation.
    #[must_use]
    pub fn rotation(&self) -> UnitQuaternion<f64> {
        self.motion.rotation()
    }

    /// The child's origin in the parent (m).
    #[must_use]
    pub fn position(&self) -> Vector3<f64> {
        self.motion.position()
    }

    /// The (constant) motion.
    #[must_use]
    pub fn motion(&self) -> Motion {
        self.motion
    }
}

/// Rotation of the child about an axis fixed in the parent (through the parent's origin): at
/// time `t` the angle is `angle_at_zero + rate·t + ½·angular_acceleration·t²`, the rate
/// `rate + angular_acceleration·t`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Spin {
    axis: Vector3<f64>,
    rate: f64,
    angle_at_zero: f64,
    angular_acceleration: f64,
}

impl Spin {
    /// A spin about `axis` (resolved in the parent, normalised here) at `rate` (rad/s), with
    /// `angle_at_zero` (rad) at `t = 0` and a constant `angular_acceleration` (rad/s²).
    ///
    /// # Errors
    /// [`Error::ZeroNorm`] for a zero axis; [`Error::NonFinite`] or [`Error::BeyondLimit`]
    /// naming `axis`, `rate`, `angle_at_zero` or `angular_acceleration`.
    pub fn new(axis: Vector3<f64>, rate: f64, angle_at_zero: f64, angular_acceleration: f64) -> Result<Self> {
        limits::check_vector(&axis, limits::MAX_FREE_VECTOR, "(direction)", "axis")?;
        // An axis already unit to the last ulps is kept as given (so that a saved graph reads
        // back bit for bit); any other is normalised.
        let axis = if (axis.norm_squared() - 1.0).abs() <= crate::rotation::UNIT_AS_GIVEN {
            axis
        } else {
            Unit::try_new(axis, math::TINY_NORM).ok_or(Error::ZeroNorm { quantity: "axis" })?.into_inner()
        };
        limits::check_scalar(rate, limits::MAX_ANGULAR_VELOCITY, "rad/s", "rate")?;
        ensure_finite1(angle_at_zero, "angle_at_zero")?;
        limits::check_scalar(angular_acceleration, limits::MAX_ANGULAR_ACCELERATION, "rad/s²", "angular_acceleration")?;
        Ok(Self { axis, rate, angle_at_zero, angular_acceleration })
    }

    /// The unit axis, resolved in the parent.
    #[must_use]
    pub fn axis(&self) -> Vector3<f64> {
        self.axis
    }
    /// The rate at `t = 0` (rad/s).
    #[must_use]
    pub fn rate(&self) -> f64 {
        self.rate
    }
    /// The angle at `t = 0` (rad).
    #[must_use]
    pub fn angle_at_zero(&self) -> f64 {
        self.angle_at_zero
    }
    /// The constant angular acceleration (rad/s²).
    #[must_use]
    pub fn angular_acceleration(&self) -> f64 {
        self.angular_acceleration
    }

    /// The motion at time `time` (s).
    ///
    /// # Errors
    /// [`Error::BeyondLimit`] naming `time` beyond [`MAX_TIME`](limits::MAX_TIME), or naming
    /// `angular_rate` when the accelerating spin has passed
    /// [`MAX_ANGULAR_VELOCITY`](limits::MAX_ANGULAR_VELOCITY).
    #[inline(always)]
    pub fn motion_at(&self, time: f64) -> Result<Motion> {
        limits::check_scalar(time, limits::MAX_TIME, "s", "time")?;
        let angle = self.angle_at_zero + time * (self.rate + 0.5 * self.angular_acceleration * time);
        FrameMotion::about_axis(self.axis, angle, self.rate + self.angular_acceleration * time, self.angular_acceleration)
    }
}

/// The Earth-fixed frame (ECEF) relative to the inertial frame, `t` seconds after an epoch:
/// the rotation angle at the epoch is given directly (and the frame turns at the model's `Ω`),
/// or as the Earth Rotation Angle of a two-part UT1 Julian date (IERS Conventions 2010, eq.
/// 5.15; see [`earth_rotation_angle`](crate::earth::earth_rotation_angle)), and the frame then
/// turns at the ERA's rate [`ERA_RATE`](crate::earth::ERA_RATE), `t` being UT1 seconds after
/// the epoch, so that `t` stays small and precise whatever the date.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EarthRotation {
    model: EarthModel,
    angle_at_epoch: f64,
    epoch_ut1: Option<(f64, f64)>,
}

impl EarthRotation {
    /// The Earth turning at `model`'s rate, at angle `angle_at_epoch` (rad) at `t = 0`.
    ///
    /// # Errors
    /// [`Error::NonFinite`] naming `angle_at_epoch`.
    pub fn with_angle(model: EarthModel, angle_at_epoch: f64) -> Result<Self> {
        ensure_finite1(angle_at_epoch, "angle_at_epoch")?;
        Ok(Self { model, angle_at_epoch, epoch_ut1: None })
    }

    /// The Earth turning at the Earth Rotation Angle's rate
    /// ([`ERA_RATE`](crate::earth::ERA_RATE)), `t = 0` (UT1 seconds) at the UT1 Julian date
    /// `jd_ut1 + jd_ut1_fraction`. (`model` is kept for the frame graph's other uses of it.)
    ///
    /// # Errors
    /// As [`earth_rotation_angle`](crate::earth::earth_rotation_angle).
    pub fn at_ut1_epoch(model: EarthModel, jd_ut1: f64, jd_ut1_fraction: f64) -> Result<Self> {
        let angle_at_epoch = earth::earth_rotation_angle(jd_ut1, jd_ut1_fraction)?;
        Ok(Self { model, angle_at_epoch, epoch_ut1: Some((jd_ut1, jd_ut1_fraction)) })
    }

    /// The Earth model (rotation rate).
    #[must_use]
    pub fn model(&self) -> &EarthModel {
        &self.model
    }
    /// The rotation angle at `t = 0` (rad).
    #[must_use]
    pub fn angle_at_epoch(&self) -> f64 {
        self.angle_at_epoch
    }
    /// The two-part UT1 Julian date of `t = 0`, when the epoch was given as one.
    #[must_use]
    pub fn epoch_ut1(&self) -> Option<(f64, f64)> {
        self.epoch_ut1
    }

    /// The motion at time `time` (s after the epoch).
    ///
    /// # Errors
    /// [`Error::BeyondLimit`] naming `time` beyond [`MAX_TIME`](limits::MAX_TIME).
    #[inline(always)]
    pub fn motion_at(&self, time: f64) -> Result<Motion> {
        limits::check_scalar(time, limits::MAX_TIME, "s", "time")?;
        let rate = if self.epoch_ut1.is_some() { earth::ERA_RATE } else { self.model.rotation_rate() };
        Ok(earth::earth_motion_at_rate(rate, time, self.angle_at_epoch)?.erase_frames())
    }
}

/// The axes of a local-level frame.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum LocalAxes {
    /// North, east, down.
    #[default]
    Ned,
    /// East, north, up.
    Enu,
}

/// A local-level frame fixed at a geodetic point, relative to ECEF: origin at the point, axes
/// NED or ENU along the ellipsoidal normal (valid at the poles too: the axes there follow the
/// given longitude).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Site {
    model: EarthModel,
    position: Geodetic,
    axes: LocalAxes,
    motion: Motion,
}

impl Site {
    /// A site at `position` on `model`'s ellipsoid with `axes`.
    ///
    /// # Errors
    /// As [`Geodetic::validate_for`] (naming `latitude`, `longitude` or `height`).
    pub fn new(model: EarthModel, position: Geodetic, axes: LocalAxes) -> Result<Self> {
        let origin = earth::geodetic_to_ecef(&model, &position)?;
        let ecef_from_ned = earth::ecef_from_ned_quaternion(position.latitude, position.longitude)?;
        let rotation = match axes {
            LocalAxes::Ned => ecef_from_ned,
            LocalAxes::Enu => ecef_from_ned * earth::enu_in_ned().rotation(),
        };
        let motion = FrameMotion::from_parts(MotionParts { rotation, position: origin, ..MotionParts::default() })?;
        Ok(Self { model, position, axes, motion })
    }

    /// The Earth model.
    #[must_use]
    pub fn model(&self) -> &EarthModel {
        &self.model
    }
    /// The site's geodetic position.
    #[must_use]
    pub fn position(&self) -> Geodetic {
        self.position
    }
    /// The axes.
    #[must_use]
    pub fn axes(&self) -> LocalAxes {
        self.axes
    }
    /// The (constant) motion relative to ECEF.
    #[must_use]
    pub fn motion(&self) -> Motion {
        self.motion
    }
}

/// An edge whose motion follows from a few constants (the kinds a configuration file holds).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StaticEdge {
    /// A constant rotation and offset.
    Fixed(Fixed),
    /// A spin about a fixed axis.
    Spin(Spin),
    /// The Earth's rotation.
    Earth(EarthRotation),
    /// A local-level frame at a fixed point.
    Site(Site),
}

impl StaticEdge {
    /// The motion of the child relative to the parent at `time` (s).
    ///
    /// # Errors
    /// As the edge's own `motion_at`.
    #[inline(always)]
    pub fn motion_at(&self, time: f64) -> Result<Motion> {
        match self {
            StaticEdge::Fixed(f) => Ok(f.motion),
            StaticEdge::Spin(s) => s.motion_at(time),
            StaticEdge::Earth(e) => e.motion_at(time),
            StaticEdge::Site(s) => Ok(s.motion),
        }
    }

    /// The edge's kind as a configuration file names it.
    #[must_use]
    pub fn kind_name(&self) -> &'static str {
        match self {
            StaticEdge::Fixed(_) => "fixed",
            StaticEdge::Spin(_) => "spin",
            StaticEdge::Earth(_) => "earth",
            StaticEdge::Site(_) => "site",
        }
    }

    /// The motion of a constant edge (fixed, site), `None` for one that changes with time.
    #[must_use]
    #[inline]
    pub fn constant_motion(&self) -> Option<Motion> {
        match self {
            StaticEdge::Fixed(f) => Some(f.motion),
            StaticEdge::Site(s) => Some(s.motion),
            StaticEdge::Spin(_) | StaticEdge::Earth(_) => None,
        }
    }
}

/// What went wrong finding or evaluating a path, by frame index (the named [`FrameGraph`]
/// turns it into a [`GraphError`] with names).
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub enum GraphFault {
    /// A frame index not in the tree.
    UnknownFrame {
        /// The index given.
        frame: FrameId,
    },
    /// Two frames with no common ancestor.
    DifferentTrees {
        /// The parent frame of the query.
        parent: FrameId,
        /// The child frame of the query.
        child: FrameId,
    },
    /// A frame deeper than [`MAX_DEPTH`] (or a parent link that loops).
    TooDeep {
        /// The frame whose ancestry is too long.
        frame: FrameId,
    },
    /// Apparent accelerations were asked of a graph whose root is not inertial.
    NotInertial,
    /// A frame whose motion has not been attached (declared in a configuration, to be
    /// supplied in code).
    Unattached {
        /// The frame.
        frame: FrameId,
    },
    /// An edge's motion could not be evaluated (a time outside a sampled edge's span, a
    /// function edge's error, ...).
    Edge {
        /// The frame whose edge failed.
        frame: FrameId,
        /// Why.
        error: Error,
    },
}

impl fmt::Display for GraphFault {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            GraphFault::UnknownFrame { frame } => write!(f, "frame {frame} is not in the graph"),
            GraphFault::DifferentTrees { parent, child } => write!(f, "frames {parent} and {child} are in different trees"),
            GraphFault::TooDeep { frame } => write!(f, "frame {frame} is more than {MAX_DEPTH} edges below its root"),
            GraphFault::NotInertial => write!(f, "the graph's root is not inertial, so it has no apparent accelerations"),
            GraphFault::Unattached { frame } => write!(f, "frame {frame} has no motion attached yet"),
            GraphFault::Edge { frame, error } => write!(f, "frame {frame}: {error}"),
        }
    }
}

impl core::error::Error for GraphFault {}

/// The structure of a frame tree: parent links by index.
pub trait FrameTree {
    /// Number of frames (valid indices are `0..frame_count()`).
    fn frame_count(&self) -> usize;
    /// The parent of `frame`, or `None` for a root. Called only with valid indices.
    fn parent_of(&self, frame: FrameId) -> Option<FrameId>;
}

/// The frames between two frames of a tree: up from the query's parent frame to (not
/// including) their lowest common ancestor, then down from below it to the query's child
/// frame. Held in fixed arrays: finding a path allocates nothing.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Path {
    up: [FrameId; MAX_DEPTH],
    up_len: usize,
    down: [FrameId; MAX_DEPTH],
    down_len: usize,
    ancestor: FrameId,
}

impl Path {
    /// The path from `parent` to `child` in `tree`.
    ///
    /// # Errors
    /// [`GraphFault::UnknownFrame`], [`GraphFault::DifferentTrees`] or
    /// [`GraphFault::TooDeep`].
    pub fn between<T: FrameTree + ?Sized>(tree: &T, parent: FrameId, child: FrameId) -> core::result::Result<Self, GraphFault> {
        let (pa, pa_len) = ancestry(tree, parent)?;
        let (ca, ca_len) = ancestry(tree, child)?;
        // Both ancestries end at a root; walk back from the roots while they agree.
        if pa[pa_len - 1] != ca[ca_len - 1] {
            return Err(GraphFault::DifferentTrees { parent, child });
        }
        let mut common = 1;
        while common < pa_len && common < ca_len && pa[pa_len - 1 - common] == ca[ca_len - 1 - common] {
            common += 1;
        }
        let ancestor = pa[pa_len - common];
        let mut up = [0; MAX_DEPTH];
        let up_len = pa_len - common;
        up[..up_len].copy_from_slice(&pa[..up_len]);
        // Down: from just below the ancestor to the child, in that order.
        let down_len = ca_len - common;
        let mut down = [0; MAX_DEPTH];
        for (k, slot) in down[..down_len].iter_mut().enumerate() {
            *slot = ca[down_len - 1 - k];
        }
        Ok(Self { up, up_len, down, down_len, ancestor })
    }

    /// Frames from the query's parent frame up to (not including) the common ancestor; their
    /// edges are traversed against their direction.
    #[must_use]
    pub fn up(&self) -> &[FrameId] {
        &self.up[..self.up_len]
    }

    /// Frames from just below the common ancestor down to the query's child frame; their edges
    /// are traversed in their direction.
    #[must_use]
    pub fn down(&self) -> &[FrameId] {
        &self.down[..self.down_len]
    }

    /// The lowest common ancestor.
    #[must_use]
    pub fn ancestor(&self) -> FrameId {
        self.ancestor
    }

    /// Every frame whose edge the path uses (up, then down).
    pub fn edges(&self) -> impl Iterator<Item = FrameId> + '_ {
        self.up().iter().chain(self.down()).copied()
    }

    /// The motion of the query's child frame relative to its parent frame, from the motion of
    /// each frame on the path relative to its own parent (`edge(frame)`), composed as in the
    /// [module documentation](self).
    ///
    /// # Errors
    /// The first error of `edge`.
    #[inline]
    pub fn compose<E>(&self, edge: impl FnMut(FrameId) -> core::result::Result<Motion, E>) -> core::result::Result<Motion, E> {
        self.compose_from(&mut Closure(edge))
    }

    /// As [`compose`](Self::compose), asking `edges` for each frame's motion (an
    /// `#[inline(always)]` trait method is inlined into the composition, where a closure may
    /// not be: the difference is a store-forwarding stall per edge).
    ///
    /// # Errors
    /// The first error of `edges`.
    #[inline(always)]
    pub fn compose_from<S: EdgeMotions>(&self, edges: &mut S) -> core::result::Result<Motion, S::Error> {
        self.fold(|_| None).compose_from(edges)
    }

    /// The path with the motions of its constant edges composed once, for evaluating it at
    /// many times: `constant(frame)` gives the motion of a frame whose edge does not change
    /// with time (fixed, site), `None` for any other.
    ///
    /// Of each of the two chains (ancestor down to the child, ancestor down to the parent
    /// frame), a leading run of constant edges is composed as the unfolded chain would compose
    /// it (the same rounding) and a trailing run of two or more (the mounts of a sensor at a
    /// leaf) into one motion, which changes the rounding of the result by a few ulps (the
    /// composition is associative in exact arithmetic; see the graph property tests for the
    /// bound). A chain of constants only is inverted once.
    #[must_use]
    pub fn fold(&self, mut constant: impl FnMut(FrameId) -> Option<Motion>) -> FoldedPath {
        let mut up_order = [0; MAX_DEPTH];
        for (slot, &frame) in up_order.iter_mut().zip(self.up().iter().rev()) {
            *slot = frame;
        }
        let down = Folds::of(self.down(), &mut constant);
        let up = Folds::of(&up_order[..self.up_len], &mut constant);
        let parent_inverse = (self.up_len > 0 && up.head == self.up_len).then(|| up.head_motion.inverse());
        FoldedPath { path: *self, up_order, down, up, parent_inverse }
    }
}

/// Edge motions from a closure.
struct Closure<F>(F);

impl<E, F: FnMut(FrameId) -> core::result::Result<Motion, E>> EdgeMotions for Closure<F> {
    type Error = E;
    #[inline(always)]
    fn edge_motion(&mut self, frame: FrameId) -> core::result::Result<Motion, E> {
        (self.0)(frame)
    }
}

/// A [`Path`] with its constant edges composed once ([`Path::fold`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FoldedPath {
    path: Path,
    /// The up list in composition order (from below the ancestor down to the parent frame).
    up_order: [FrameId; MAX_DEPTH],
    down: Folds,
    up: Folds,
    /// The inverse of the parent chain when all its edges are constant.
    parent_inverse: Option<Motion>,
}

/// The constant runs at the two ends of one chain of a path, in composition order.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Folds {
    /// How many leading edges `head_motion` composes (0: none).
    head: usize,
    head_motion: Motion,
    /// How many trailing edges `tail_motion` composes (0, or at least 2).
    tail: usize,
    tail_motion: Motion,
}

impl Folds {
    fn of(chain: &[FrameId], constant: &mut impl FnMut(FrameId) -> Option<Motion>) -> Self {
        let mut folds = Folds { head: 0, head_motion: Motion::identity(), tail: 0, tail_motion: Motion::identity() };
        for &frame in chain {
            let Some(m) = constant(frame) else { break };
            folds.head_motion = if folds.head == 0 { m } else { folds.head_motion.then(&m) };
            folds.head += 1;
        }
        let rest = &chain[folds.head..];
        let tail = rest.iter().rev().take_while(|&&frame| constant(frame).is_some()).count();
        if tail >= 2 {
            let run = &rest[rest.len() - tail..];
            let mut m = constant(run[0]).unwrap_or_else(Motion::identity);
            for &frame in &run[1..] {
                m = m.then(&constant(frame).unwrap_or_else(Motion::identity));
            }
            folds.tail = tail;
            folds.tail_motion = m;
        }
        folds
    }

    /// The chain's motion from `edges` for its variable edges (`None` for an empty chain).
    #[inline(always)]
    fn compose<S: EdgeMotions>(&self, chain: &[FrameId], edges: &mut S) -> core::result::Result<Option<Motion>, S::Error> {
        let middle = &chain[self.head..chain.len() - self.tail];
        // Each chain starts from its first motion (not from an identity, which would change
        // the rounding; not through an `Option` per step, which costs a copy per edge).
        let (mut motion, rest) = if self.head > 0 {
            (self.head_motion, middle)
        } else if let Some((&first, rest)) = middle.split_first() {
            (edges.edge_motion(first)?, rest)
        } else {
            return Ok(None);
        };
        for &frame in rest {
            motion = motion.then(&edges.edge_motion(frame)?);
        }
        if self.tail > 0 {
            motion = motion.then(&self.tail_motion);
        }
        Ok(Some(motion))
    }
}

impl FoldedPath {
    /// The path that was folded.
    #[must_use]
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// As [`compose_from`](Self::compose_from), with `edge(frame)` giving each variable
    /// edge's motion.
    ///
    /// # Errors
    /// The first error of `edge`.
    #[inline]
    pub fn compose<E>(&self, edge: impl FnMut(FrameId) -> core::result::Result<Motion, E>) -> core::result::Result<Motion, E> {
        self.compose_from(&mut Closure(edge))
    }

    /// The motion of the query's child frame relative to its parent frame, asking `edges` for
    /// the motion of each variable edge (in the same order at every call).
    ///
    /// # Errors
    /// The first error of `edges`.
    #[inline(always)]
    pub fn compose_from<S: EdgeMotions>(&self, edges: &mut S) -> core::result::Result<Motion, S::Error> {
        let child = self.down.compose(self.path.down(), edges)?;
        let parent_inverse = match self.parent_inverse {
            Some(p) => Some(p),
            None => self.up.compose(&self.up_order[..self.path.up_len], edges)?.map(|p| p.inverse()),
        };
        Ok(match (parent_inverse, child) {
            (None, None) => Motion::identity(),
            (None, Some(c)) => c,
            (Some(p), None) => p,
            (Some(p), Some(c)) => p.then(&c),
        })
    }
}

/// The motion of each frame of a path relative to its parent, at the time being evaluated
/// (for [`Path::compose_from`]).
pub trait EdgeMotions {
    /// Why an edge's motion is not available.
    type Error;
    /// The motion of `frame` relative to its parent.
    ///
    /// # Errors
    /// Whatever the edge cannot do.
    fn edge_motion(&mut self, frame: FrameId) -> core::result::Result<Motion, Self::Error>;
}

/// `frame` and its ancestors up to its root, nearest first, and how many there are.
fn ancestry<T: FrameTree + ?Sized>(
    tree: &T,
    frame: FrameId,
) -> core::result::Result<([FrameId; MAX_DEPTH + 1], usize), GraphFault> {
    let n = tree.frame_count();
    if frame >= n {
        return Err(GraphFault::UnknownFrame { frame });
    }
    let mut chain = [0; MAX_DEPTH + 1];
    chain[0] = frame;
    let mut len = 1;
    let mut current = frame;
    while let Some(parent) = tree.parent_of(current) {
        if parent >= n {
            return Err(GraphFault::UnknownFrame { frame: parent });
        }
        if len > MAX_DEPTH {
            return Err(GraphFault::TooDeep { frame });
        }
        chain[len] = parent;
        len += 1;
        current = parent;
    }
    Ok((chain, len))
}

#[cfg(test)]
mod tests {
    use super::*;

    struct Links(&'static [Option<usize>]);
    impl FrameTree for Links {
        fn frame_count(&self) -> usize {
            self.0.len()
        }
        fn parent_of(&self, frame: FrameId) -> Option<FrameId> {
            self.0[frame]
        }
    }

    #[test]
    fn paths_go_up_to_the_lowest_common_ancestor_and_down() {
        // 0 ─ 1 ─ 2 ─ 3
        //      └─ 4 ─ 5
        let tree = Links(&[None, Some(0), Some(1), Some(2), Some(1), Some(4)]);
        let p = Path::between(&tree, 3, 5).unwrap();
        assert_eq!((p.up(), p.down(), p.ancestor()), (&[3, 2][..], &[4, 5][..], 1));
        let p = Path::between(&tree, 0, 3).unwrap();
        assert_eq!((p.up(), p.down(), p.ancestor()), (&[][..], &[1, 2, 3][..], 0));
        let p = Path::between(&tree, 5, 5).unwrap();
        assert!(p.up().is_empty() && p.down().is_empty());
    }

    #[test]
    fn paths_refuse_unknown_frames_separate_trees_and_loops() {
        let two_roots = Links(&[None, Some(0), None, Some(2)]);
        assert_eq!(Path::between(&two_roots, 1, 3), Err(GraphFault::DifferentTrees { parent: 1, child: 3 }));
        assert_eq!(Path::between(&two_roots, 0, 9), Err(GraphFault::UnknownFrame { frame: 9 }));
        let looped = Links(&[Some(1), Some(0)]);
        assert_eq!(Path::between(&looped, 0, 1), Err(GraphFault::TooDeep { frame: 0 }));
    }
}
