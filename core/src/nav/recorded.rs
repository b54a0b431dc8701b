//! IMU increments from recorded arrays of time, geodetic position and attitude, and the
//! interpolation of any sampled motion.
//!
//! The interpolator works on a [`PoseSource`]: times, the position of a frame's origin in its
//! parent and the frame's attitude (and, optionally, their measured rates). Geodetic logs
//! ([`RecordedTrajectory`]) are one source, relative to ECEF; Cartesian samples in any parent
//! ([`CartesianSamples`]) are another, used by the frame graph's sampled edges
//! ([`SampledMotion`]).
//!
//! Analysts hold logs, not closures. [`RecordedTrajectory`] turns samples `(t_k, φ_k, λ_k, h_k,
//! q_k)` (`q_k` the body-to-NED attitude) into a motion of the body relative to ECEF that can
//! be differentiated twice, and so fed to [`ideal_imu`](super::ideal_imu) and
//! [`imu_increments`](super::imu_increments).
//!
//! # Method
//!
//! 1. Each sample becomes an ECEF position `r_k` ([`geodetic_to_ecef`]) and a body-to-ECEF
//!    quaternion `p_k = q_en(φ_k, λ_k) ⊗ q_k`, its sign chosen to agree with its neighbours
//!    (`p` and `−p` are the same rotation; interpolation needs a continuous choice).
//! 2. At every sample the first and second time derivatives of the seven channels (three
//!    position, four quaternion components) are estimated by differentiating the Lagrange
//!    polynomial through the seven nearest samples (centred where possible, one-sided at the
//!    ends), with weights from Fornberg's algorithm for arbitrary spacing (B. Fornberg,
//!    "Generation of finite difference formulas on arbitrarily spaced grids", *Math. Comp.* 51
//!    (1988) 699–706). For smooth motion the estimates are accurate to `O(Δt⁶)` (first) and
//!    `O(Δt⁵)` (second derivative). Where the source gives measured rates (velocity `v` and
//!    angular velocity `ω`, both resolved in the parent) they are the first derivatives
//!    (`ṗ = ½ ω ⊗ p` for the quaternion) and the second derivatives are the stencil's first
//!    derivative of them.
//! 3. Between samples each channel is the quintic Hermite polynomial matching value, first and
//!    second derivative at both ends, so position, velocity and acceleration (and attitude,
//!    angular velocity and angular acceleration) are continuous across samples.
//! 4. The interpolated quaternion `p(t)` is normalised; with `n² = p·p`, the angular velocity
//!    and acceleration of the body relative to ECEF, resolved in ECEF, are
//!
//!    ```text
//!    ω = 2 vec(ṗ ⊗ p*) / n²
//!    α = 2 vec(p̈ ⊗ p*) / n² − 2 ω (p·ṗ) / n²
//!    ```
//!
//!    (from `q̇ = ½ ω ⊗ q` for `q = p/n`; the scalar parts drop out).
//!
//! # Accuracy (measured by the tests on an analytic manoeuvre)
//!
//! The truncation error falls like Δt⁶ (doubling the rate cut the velocity error 66× from 5
//! to 10 Hz and the angular-velocity error 52× from 50 to 100 Hz). At 100 Hz, midway between
//! samples, the errors were 1.3e-9 m, 1.8e-7 m/s, 5.2e-5 m/s² in position, velocity and
//! acceleration and 2.7e-8 rad/s, 8.4e-6 rad/s² in angular velocity and acceleration. Above
//! about 20 Hz the position-derived figures are set by the log itself: an f64 geodetic position
//! round-trips to ECEF within about 1.3e-9 m, and differentiating amplifies that as 1/Δt and
//! 1/Δt². The increments average it out: over 10 ms intervals they were within 1.3e-13 rad
//! and 1.0e-6 m/s of the exact ones, and navigating two minutes on them ended 0.2 mm from the
//! truth. Logs sampled more coarsely than their motion (a vibration above a quarter of the
//! sample rate, say) cannot be interpolated this way; the method assumes smooth motion.

use nalgebra::{Quaternion, UnitQuaternion, Vector3};

use crate::earth::{EarthModel, Geodetic, earth_motion, ecef_from_ned_quaternion, geodetic_to_ecef};
use crate::error::{BatchError, Error, Result};
use crate::frames::{AnyFrame, Ecef, Eci, Frame};
use crate::motion::{FrameMotion, MotionParts};
use crate::rotation::quaternion_from_wxyz;

/// Samples per derivative stencil (fewer if the record is shorter).
const STENCIL: usize = 7;

/// One recorded sample.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct RecordedSample {
    /// Time (s).
    pub time: f64,
    /// Geodetic position.
    pub position: Geodetic,
    /// Body-to-NED attitude quaternion, Hamilton `[w, x, y, z]`.
    pub attitude: [f64; 4],
}

/// Read access to recorded samples in whatever layout the caller holds them.
pub trait SampleSource {
    /// Number of samples.
    fn len(&self) -> usize;
    /// Whether there are no samples.
    fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Sample `index` (`index < len()`).
    fn sample(&self, index: usize) -> RecordedSample;
    /// Time of sample `index` (s).
    fn time(&self, index: usize) -> f64 {
        self.sample(index).time
    }
    /// Measured NED velocity relative to the Earth (m/s) and angular rate of the body
    /// relative to the Earth, resolved in the body (rad/s), at sample `index`, if the log
    /// has them (then they replace the derivatives estimated from positions and attitudes).
    fn rates(&self, index: usize) -> Option<([f64; 3], [f64; 3])> {
        let _ = index;
        None
    }
}

/// Samples held as parallel slices.
///
/// ```
/// use rotaframe::earth::Geodetic;
/// use rotaframe::nav::{RecordedSlices, SampleSource};
/// let t = [0.0, 0.1, 0.2];
/// let p = [Geodetic::from_degrees(10.0, 20.0, 0.0); 3];
/// let q = [[1.0, 0.0, 0.0, 0.0]; 3];
/// let s = RecordedSlices { times: &t, positions: &p, attitudes: &q };
/// assert_eq!(s.len(), 3);
/// ```
#[derive(Debug, Clone, Copy)]
pub struct RecordedSlices<'a> {
    /// Times (s), strictly increasing.
    pub times: &'a [f64],
    /// Geodetic positions.
    pub positions: &'a [Geodetic],
    /// Body-to-NED attitudes, `[w, x, y, z]`.
    pub attitudes: &'a [[f64; 4]],
}

impl SampleSource for RecordedSlices<'_> {
    fn len(&self) -> usize {
        self.times.len().min(self.positions.len()).min(self.attitudes.len())
    }
    fn sample(&self, index: usize) -> RecordedSample {
        RecordedSample { time: self.times[index], position: self.positions[index], attitude: self.attitudes[index] }
    }
    fn time(&self, index: usize) -> f64 {
        self.times[index]
    }
}

/// Quintic Hermite coefficients in `u = (t − start)/length` for the seven channels of one
/// interval: three position offsets from `origin`, four quaternion components.
#[derive(Debug, Clone, Copy)]
struct Segment {
    index: usize,
    start: f64,
    length: f64,
    origin: Vector3<f64>,
    coefficients: [[f64; 6]; 7],
}

/// The poses of a sampled motion: at sample `k`, the time, the position of the child's origin
/// relative to the parent (resolved in the parent, m) and the child-to-parent quaternion, and
/// optionally measured rates. Implement it for whatever layout the samples are held in.
pub trait PoseSource {
    /// Number of samples.
    fn len(&self) -> usize;
    /// Whether there are no samples.
    fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Time of sample `index` (s).
    fn time(&self, index: usize) -> f64;
    /// Position (m, in the parent) and child-to-parent quaternion (any sign, unit) of sample
    /// `index`.
    ///
    /// # Errors
    /// Any error of converting the sample (a bad position or attitude), naming the quantity.
    fn pose(&self, index: usize) -> Result<(Vector3<f64>, Quaternion<f64>)>;
    /// Measured velocity (m/s) and angular velocity (rad/s) of the child relative to the
    /// parent, both resolved in the parent, at sample `index`, when the source has them.
    ///
    /// # Errors
    /// Any error of converting the rates.
    fn rates(&self, index: usize) -> Result<Option<(Vector3<f64>, Vector3<f64>)>> {
        let _ = index;
        Ok(None)
    }
}

/// Cartesian samples in slices: times, positions in the parent, child-to-parent attitudes
/// `[w, x, y, z]`, and optionally velocities (in the parent's axes) and angular rates (of the
/// child relative to the parent, resolved in the **child**, as a gyro fixed in it would read
/// them if the parent were inertial).
///
/// ```
/// use rotaframe::nav::{CartesianSamples, SampledMotion};
/// let t = [0.0, 1.0, 2.0, 3.0];
/// let r = [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [2.0, 0.0, 0.0], [3.0, 0.0, 0.0]];
/// let q = [[1.0, 0.0, 0.0, 0.0]; 4];
/// let mut path = SampledMotion::new(CartesianSamples { times: &t, positions: &r, attitudes: &q, velocities: None, angular_rates: None }).unwrap();
/// let m = path.motion_at(1.5).unwrap();
/// assert!((m.velocity().x - 1.0).abs() < 1e-12 && (m.position().x - 1.5).abs() < 1e-12);
/// ```
#[derive(Debug, Clone, Copy)]
pub struct CartesianSamples<'a> {
    /// Times (s), strictly increasing.
    pub times: &'a [f64],
    /// Positions of the child's origin relative to the parent, resolved in the parent (m).
    pub positions: &'a [[f64; 3]],
    /// Child-to-parent attitudes, Hamilton `[w, x, y, z]`.
    pub attitudes: &'a [[f64; 4]],
    /// Velocities relative to the parent, resolved in the parent (m/s), if measured.
    pub velocities: Option<&'a [[f64; 3]]>,
    /// Angular rates of the child relative to the parent, resolved in the child (rad/s), if
    /// measured.
    pub angular_rates: Option<&'a [[f64; 3]]>,
}

impl PoseSource for CartesianSamples<'_> {
    fn len(&self) -> usize {
        let mut n = self.times.len().min(self.positions.len()).min(self.attitudes.len());
        if let Some(v) = self.velocities {
            n = n.min(v.len());
        }
        if let Some(w) = self.angular_rates {
            n = n.min(w.len());
        }
        n
    }
    fn time(&self, index: usize) -> f64 {
        self.times[index]
    }
    fn pose(&self, index: usize) -> Result<(Vector3<f64>, Quaternion<f64>)> {
        let r = Vector3::from(self.positions[index]);
        crate::limits::check_vector(&r, crate::limits::MAX_POSITION, "m", "position")?;
        Ok((r, quaternion_from_wxyz(self.attitudes[index], "attitude")?.into_inner()))
    }
    fn rates(&self, index: usize) -> Result<Option<(Vector3<f64>, Vector3<f64>)>> {
        measured_rates(self.velocities.map(|v| v[index]), self.angular_rates.map(|w| w[index]), || {
            quaternion_from_wxyz(self.attitudes[index], "attitude")
        })
    }
}

/// Measured rates in the parent's axes from a velocity (parent axes) and an angular rate (child
/// axes, rotated by the child-to-parent `attitude`); both or neither must be given.
fn measured_rates(
    velocity: Option<[f64; 3]>,
    angular_rate: Option<[f64; 3]>,
    attitude: impl Fn() -> Result<UnitQuaternion<f64>>,
) -> Result<Option<(Vector3<f64>, Vector3<f64>)>> {
    match (velocity, angular_rate) {
        (None, None) => Ok(None),
        (Some(v), Some(w)) => {
            let (v, w) = (Vector3::from(v), Vector3::from(w));
            crate::limits::check_vector(&v, crate::limits::MAX_VELOCITY, "m/s", "velocity")?;
            crate::limits::check_vector(&w, crate::limits::MAX_ANGULAR_VELOCITY, "rad/s", "angular_rate")?;
            Ok(Some((v, attitude()? * w)))
        }
        (Some(_), None) => Err(Error::Invalid { quantity: "angular_rate", reason: "give velocities and angular rates together" }),
        (None, Some(_)) => Err(Error::Invalid { quantity: "velocity", reason: "give velocities and angular rates together" }),
    }
}

/// Geodetic samples (a [`SampleSource`]) as poses relative to ECEF: the ECEF position and the
/// body-to-ECEF quaternion `q_en ⊗ q_nb` (and, where the source has them, the NED velocity
/// and body rates rotated into ECEF).
#[derive(Debug, Clone)]
pub struct GeodeticPoses<S: SampleSource> {
    /// The ellipsoid of the geodetic positions.
    pub model: EarthModel,
    /// The samples.
    pub source: S,
}

impl<S: SampleSource> GeodeticPoses<S> {
    fn body_to_ecef(&self, sample: &RecordedSample) -> Result<UnitQuaternion<f64>> {
        let q_en = ecef_from_ned_quaternion(sample.position.latitude, sample.position.longitude)?;
        Ok(q_en * quaternion_from_wxyz(sample.attitude, "attitude")?)
    }
}

impl<S: SampleSource> PoseSource for GeodeticPoses<S> {
    fn len(&self) -> usize {
        self.source.len()
    }
    fn time(&self, index: usize) -> f64 {
        self.source.time(index)
    }
    fn pose(&self, index: usize) -> Result<(Vector3<f64>, Quaternion<f64>)> {
        let sample = self.source.sample(index);
        let r = geodetic_to_ecef(&self.model, &sample.position)?;
        Ok((r, self.body_to_ecef(&sample)?.into_inner()))
    }
    fn rates(&self, index: usize) -> Result<Option<(Vector3<f64>, Vector3<f64>)>> {
        let Some((velocity_ned, body_rate)) = self.source.rates(index) else { return Ok(None) };
        let sample = self.source.sample(index);
        let q_en = ecef_from_ned_quaternion(sample.position.latitude, sample.position.longitude)?;
        let v_ecef = q_en * Vector3::from(velocity_ned);
        measured_rates(Some(v_ecef.into()), Some(body_rate), || self.body_to_ecef(&sample))
    }
}

/// A twice-differentiable motion through sampled poses; see the [module documentation](self).
/// It remembers the last interval it interpolated (`motion_at`), so that reading it at times
/// in order costs one interpolant per interval.
#[derive(Debug, Clone)]
pub struct SampledMotion<P: PoseSource> {
    poses: P,
    cache: SegmentCache,
}

/// The interpolant of the interval last read, kept by the caller of
/// [`SampledMotion::motion_cached`] (one per reader, so that a shared motion can be read in
/// order by several).
#[derive(Debug, Clone, Copy, Default)]
pub struct SegmentCache(Option<Segment>);

impl<P: PoseSource> SampledMotion<P> {
    /// Checks the poses and wraps them: at least 3 samples, times finite, within
    /// [`MAX_TIME`](crate::limits::MAX_TIME) and increasing by at least
    /// [`MIN_INTERVAL`](crate::limits::MIN_INTERVAL) from one sample to the next (closer
    /// samples would make the interpolated rates overflow), every pose (and rate) convertible.
    ///
    /// # Errors
    /// [`BatchError`] with the index of the first bad sample; [`Error::LengthMismatch`]
    /// naming `samples` (index 0) if there are fewer than 3.
    pub fn new(poses: P) -> core::result::Result<Self, BatchError> {
        let n = poses.len();
        if n < 3 {
            return Err(BatchError { index: 0, error: Error::LengthMismatch { quantity: "samples", found: n, expected: 3 } });
        }
        let mut previous = f64::NEG_INFINITY;
        for index in 0..n {
            let time = poses.time(index);
            let check = || -> Result<()> {
                crate::limits::check_scalar(time, crate::limits::MAX_TIME, "s", "time")?;
                if time <= previous {
                    return Err(Error::Invalid { quantity: "time", reason: "times must be strictly increasing" });
                }
                if time - previous < crate::limits::MIN_INTERVAL {
                    return Err(Error::Invalid {
                        quantity: "time",
                        reason: "samples must be at least 1e-9 s (MIN_INTERVAL) apart",
                    });
                }
                poses.pose(index)?;
                poses.rates(index).map(|_| ())
            };
            check().map_err(|error| BatchError { index, error })?;
            previous = time;
        }
        Ok(Self { poses, cache: SegmentCache::default() })
    }

    /// Wraps poses already checked by [`new`](Self::new) (for callers that keep the samples
    /// and rebuild the wrapper per use, as the C interface does). Unchecked poses give errors
    /// or unspecified motions, never undefined behaviour.
    #[must_use]
    pub fn new_unchecked(poses: P) -> Self {
        Self { poses, cache: SegmentCache::default() }
    }

    /// The wrapped poses.
    pub fn poses(&self) -> &P {
        &self.poses
    }

    /// Time of the first sample (s).
    pub fn start_time(&self) -> f64 {
        self.poses.time(0)
    }

    /// Time of the last sample (s).
    pub fn end_time(&self) -> f64 {
        self.poses.time(self.poses.len() - 1)
    }

    /// The interval holding `time`, after checking that it lies within the record.
    fn interval(&self, time: f64) -> Result<usize> {
        let (t0, t1) = (self.start_time(), self.end_time());
        crate::error::ensure_finite1(time, "time")?;
        if !(t0..=t1).contains(&time) {
            return Err(Error::OutOfRange { quantity: "time", value: time, min: t0, max: t1 });
        }
        let n = self.poses.len();
        // Interval k holds [t_k, t_{k+1}]: the last k with t_k <= time, capped at n − 2.
        let mut lo = 0;
        let mut hi = n - 1;
        while hi - lo > 1 {
            let mid = (lo + hi) / 2;
            if self.poses.time(mid) <= time { lo = mid } else { hi = mid }
        }
        Ok(lo.min(n - 2))
    }

    /// The interpolated motion of the child relative to the parent at `time` (s), within the
    /// record (no extrapolation). Remembers the interval for the next call.
    ///
    /// # Errors
    /// [`Error::OutOfRange`] naming `time` outside `[start_time, end_time]`;
    /// [`Error::BeyondLimit`] naming the part of the motion (`velocity`, `angular_velocity`,
    /// ...) when samples too close in time for their motion give rates beyond the
    /// [`limits`](crate::limits).
    pub fn motion_at(&mut self, time: f64) -> Result<FrameMotion<AnyFrame, AnyFrame>> {
        let mut cache = self.cache;
        let result = self.motion_cached(time, &mut cache);
        self.cache = cache;
        result
    }

    /// As [`motion_at`](Self::motion_at), with the memory of the last interval kept by the
    /// caller.
    ///
    /// # Errors
    /// As [`motion_at`](Self::motion_at).
    pub fn motion_cached(&self, time: f64, cache: &mut SegmentCache) -> Result<FrameMotion<AnyFrame, AnyFrame>> {
        let index = self.interval(time)?;
        let segment = match cache.0 {
            Some(s) if s.index == index => s,
            _ => {
                let s = segment(&self.poses, index)?;
                cache.0 = Some(s);
                s
            }
        };
        segment.evaluate(time)
    }

    /// As [`motion_at`](Self::motion_at), without the memory of the last interval (for
    /// shared, read-only use).
    ///
    /// # Errors
    /// As [`motion_at`](Self::motion_at).
    pub fn motion_at_once(&self, time: f64) -> Result<FrameMotion<AnyFrame, AnyFrame>> {
        segment(&self.poses, self.interval(time)?)?.evaluate(time)
    }
}

/// A twice-differentiable body trajectory through recorded geodetic samples, relative to
/// ECEF; see the [module documentation](self).
///
/// # Example
/// A boat holding course and speed, logged at 10 Hz, read back between samples:
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{Geodetic, WGS84};
/// use rotaframe::frames::Body;
/// use rotaframe::nav::{RecordedSlices, RecordedTrajectory};
/// let t: Vec<f64> = (0..50).map(|k| k as f64 * 0.1).collect();
/// let p: Vec<Geodetic> = t.iter().map(|&s| Geodetic::new(0.9, 0.1 + 1e-6 * s, 0.0)).collect();
/// let q = vec![[1.0, 0.0, 0.0, 0.0]; t.len()];
/// let mut path = RecordedTrajectory::new(WGS84, RecordedSlices { times: &t, positions: &p, attitudes: &q }).unwrap();
/// let m = path.motion_at::<Body>(2.05).unwrap();
/// // Eastward at 1e-6 rad/s of longitude: speed (N + h) cos φ · 1e-6 m/s.
/// assert_relative_eq!(m.velocity().norm(), 6.39e6 * 0.9f64.cos() * 1e-6, max_relative = 2e-3);
/// ```
#[derive(Debug, Clone)]
pub struct RecordedTrajectory<S: SampleSource> {
    path: SampledMotion<GeodeticPoses<S>>,
}

impl<S: SampleSource> RecordedTrajectory<S> {
    /// Checks the samples and wraps them: at least 3 samples, times finite, within
    /// [`MAX_TIME`](crate::limits::MAX_TIME) and strictly increasing, positions valid for
    /// `model` ([`Geodetic::validate_for`](crate::earth::Geodetic::validate_for)), attitudes
    /// unit quaternions.
    ///
    /// # Errors
    /// [`BatchError`] with the index of the first bad sample; [`Error::LengthMismatch`]
    /// naming `samples` (index 0) if there are fewer than 3.
    pub fn new(model: EarthModel, source: S) -> core::result::Result<Self, BatchError> {
        Ok(Self { path: SampledMotion::new(GeodeticPoses { model, source })? })
    }

    /// The wrapped samples.
    pub fn source(&self) -> &S {
        &self.path.poses().source
    }

    /// Time of the first sample (s).
    pub fn start_time(&self) -> f64 {
        self.path.start_time()
    }

    /// Time of the last sample (s).
    pub fn end_time(&self) -> f64 {
        self.path.end_time()
    }

    /// The interpolated motion of the body relative to ECEF at `time` (s), within the record.
    ///
    /// # Errors
    /// As [`SampledMotion::motion_at`].
    pub fn motion_at<B: Frame>(&mut self, time: f64) -> Result<FrameMotion<Ecef, B>> {
        Ok(self.path.motion_at(time)?.assume_frames())
    }

    /// The interpolated motion of the body relative to the inertial frame at `time`: ECEF's
    /// motion ([`earth_motion`], with the Earth rotation angle zero at the first sample) then
    /// [`motion_at`](Self::motion_at). The ideal IMU output does not depend on that angle,
    /// because both gravity models are symmetric about the polar axis.
    ///
    /// # Errors
    /// As [`motion_at`](Self::motion_at).
    pub fn inertial_motion_at<B: Frame>(&mut self, time: f64) -> Result<FrameMotion<Eci, B>> {
        let body = self.motion_at::<B>(time)?;
        Ok(earth_motion(&self.path.poses().model, time - self.start_time(), 0.0)?.then(&body))
    }
}

/// Value, first and second derivative of the seven channels at sample `k`, position offsets
/// taken from `origin`, quaternion sign aligned with `reference`.
fn knot<P: PoseSource>(poses: &P, k: usize, origin: &Vector3<f64>, reference: &Quaternion<f64>) -> Result<[[f64; 3]; 7]> {
    let n = poses.len();
    let m = STENCIL.min(n);
    let first = k.saturating_sub(STENCIL / 2).min(n - m);
    let tk = poses.time(k);
    let mut offsets = [0.0; STENCIL];
    let mut values = [[0.0; 7]; STENCIL];
    let mut rates = [[0.0; 7]; STENCIL];
    let mut measured = true;
    for j in 0..m {
        offsets[j] = poses.time(first + j) - tk;
        let (r, p) = poses.pose(first + j)?;
        let r = r - origin;
        let p = if p.dot(reference) < 0.0 { -p } else { p };
        values[j] = [r.x, r.y, r.z, p.w, p.i, p.j, p.k];
        match poses.rates(first + j)? {
            Some((v, w)) if measured => {
                // ṗ = ½ ω ⊗ p for ω resolved in the parent (p maps child to parent).
                let p_dot = Quaternion::from_imag(w) * p * 0.5;
                rates[j] = [v.x, v.y, v.z, p_dot.w, p_dot.i, p_dot.j, p_dot.k];
            }
            _ => measured = false,
        }
    }
    let weights = fornberg_weights(&offsets[..m]);
    let centre = k - first;
    let mut out = [[0.0; 3]; 7];
    for (c, channel) in out.iter_mut().enumerate() {
        channel[0] = values[centre][c];
        if measured {
            channel[1] = rates[centre][c];
            for j in 0..m {
                channel[2] += weights[1][j] * (rates[j][c] - rates[centre][c]);
            }
        } else {
            for j in 0..m {
                channel[1] += weights[1][j] * (values[j][c] - values[centre][c]);
                channel[2] += weights[2][j] * (values[j][c] - values[centre][c]);
            }
        }
    }
    Ok(out)
}

/// The quintic Hermite interpolant of interval `index` (between samples `index` and
/// `index + 1`).
fn segment<P: PoseSource>(poses: &P, index: usize) -> Result<Segment> {
    let (origin, p0) = poses.pose(index)?;
    let (_, p1) = poses.pose(index + 1)?;
    let p1 = if p1.dot(&p0) < 0.0 { -p1 } else { p1 };
    let a = knot(poses, index, &origin, &p0)?;
    let b = knot(poses, index + 1, &origin, &p1)?;
    let start = poses.time(index);
    let length = poses.time(index + 1) - start;
    let mut coefficients = [[0.0; 6]; 7];
    for c in 0..7 {
        coefficients[c] = quintic_hermite(
            [a[c][0], a[c][1] * length, a[c][2] * length * length],
            [b[c][0], b[c][1] * length, b[c][2] * length * length],
        );
    }
    Ok(Segment { index, start, length, origin, coefficients })
}

impl Segment {
    fn evaluate(&self, time: f64) -> Result<FrameMotion<AnyFrame, AnyFrame>> {
        let u = (time - self.start) / self.length;
        let (inv, inv2) = (1.0 / self.length, 1.0 / (self.length * self.length));
        let mut value = [0.0; 7];
        let mut rate = [0.0; 7];
        let mut accel = [0.0; 7];
        for c in 0..7 {
            let a = &self.coefficients[c];
            value[c] = a[0] + u * (a[1] + u * (a[2] + u * (a[3] + u * (a[4] + u * a[5]))));
            rate[c] = (a[1] + u * (2.0 * a[2] + u * (3.0 * a[3] + u * (4.0 * a[4] + u * 5.0 * a[5])))) * inv;
            accel[c] = (2.0 * a[2] + u * (6.0 * a[3] + u * (12.0 * a[4] + u * 20.0 * a[5]))) * inv2;
        }
        let quat = |v: &[f64; 7]| Quaternion::new(v[3], v[4], v[5], v[6]);
        let (p, p_dot, p_ddot) = (quat(&value), quat(&rate), quat(&accel));
        let n2 = p.norm_squared();
        let omega = 2.0 * (p_dot * p.conjugate()).imag() / n2;
        let alpha = 2.0 * (p_ddot * p.conjugate()).imag() / n2 - 2.0 * omega * p.dot(&p_dot) / n2;
        // Checked: samples closer in time than their motion allows (a glitch in a log's clock)
        // give rates beyond the limits, reported rather than passed on.
        FrameMotion::from_parts(MotionParts {
            rotation: UnitQuaternion::new_normalize(p),
            position: self.origin + Vector3::new(value[0], value[1], value[2]),
            velocity: Vector3::new(rate[0], rate[1], rate[2]),
            acceleration: Vector3::new(accel[0], accel[1], accel[2]),
            angular_velocity: omega,
            angular_acceleration: alpha,
        })
    }
}

/// Coefficients `a₀ … a₅` of the quintic `Σ aᵢ uⁱ` on `u ∈ [0, 1]` with value, first and second
/// derivative `start` at `u = 0` and `end` at `u = 1` (derivatives with respect to `u`).
fn quintic_hermite(start: [f64; 3], end: [f64; 3]) -> [f64; 6] {
    let [p0, m0, c0] = start;
    let [p1, m1, c1] = end;
    let d0 = p1 - p0 - m0 - 0.5 * c0;
    let d1 = m1 - m0 - c0;
    let d2 = c1 - c0;
    [p0, m0, 0.5 * c0, 10.0 * d0 - 4.0 * d1 + 0.5 * d2, -15.0 * d0 + 7.0 * d1 - d2, 6.0 * d0 - 3.0 * d1 + 0.5 * d2]
}

/// Finite-difference weights at `x = 0` for derivative orders 0, 1, 2 from values at the
/// distinct `nodes` (at most [`STENCIL`]), by Fornberg's recursion (Math. Comp. 51 (1988),
/// the algorithm as given in B. Fornberg, "Calculation of weights in finite difference
/// formulas", SIAM Review 40 (1998) 685–691).
fn fornberg_weights(nodes: &[f64]) -> [[f64; STENCIL]; 3] {
    let mut c = [[0.0; STENCIL]; 3];
    let mut c1 = 1.0;
    let mut c4 = nodes[0];
    c[0][0] = 1.0;
    for i in 1..nodes.len() {
        let mn = i.min(2);
        let mut c2 = 1.0;
        let c5 = c4;
        c4 = nodes[i];
        for j in 0..i {
            let c3 = nodes[i] - nodes[j];
            c2 *= c3;
            if j == i - 1 {
                for k in (1..=mn).rev() {
                    c[k][i] = c1 * (k as f64 * c[k - 1][i - 1] - c5 * c[k][i - 1]) / c2;
                }
                c[0][i] = -c1 * c5 * c[0][i - 1] / c2;
            }
            for k in (1..=mn).rev() {
                c[k][j] = (c4 * c[k][j] - k as f64 * c[k - 1][j]) / c3;
            }
            c[0][j] = c4 * c[0][j] / c3;
        }
        c1 = c2;
    }
    c
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fornberg_weights_match_the_five_point_central_formulas() {
        // Reference: the centred five-point formulas f' ≈ (f₋₂ − 8f₋₁ + 8f₁ − f₂)/12 and
        // f'' ≈ (−f₋₂ + 16f₋₁ − 30f₀ + 16f₁ − f₂)/12 at unit spacing (Fornberg 1988, Table 1;
        // Abramowitz and Stegun 25.3.6 and 25.3.24). Tolerance: a few ulps of the weights.
        let w = fornberg_weights(&[-2.0, -1.0, 0.0, 1.0, 2.0]);
        let d1 = [1.0 / 12.0, -8.0 / 12.0, 0.0, 8.0 / 12.0, -1.0 / 12.0];
        let d2 = [-1.0 / 12.0, 16.0 / 12.0, -30.0 / 12.0, 16.0 / 12.0, -1.0 / 12.0];
        for j in 0..5 {
            assert!((w[0][j] - if j == 2 { 1.0 } else { 0.0 }).abs() < 1e-15);
            assert!((w[1][j] - d1[j]).abs() < 1e-15, "d1 {j}: {}", w[1][j]);
            assert!((w[2][j] - d2[j]).abs() < 1e-14, "d2 {j}: {}", w[2][j]);
        }
    }

    #[test]
    fn fornberg_weights_differentiate_a_sextic_exactly_on_uneven_nodes() {
        // Seven nodes determine a degree-6 polynomial, so its derivatives at 0 are exact up to
        // rounding (property of Lagrange interpolation; common practice). Tolerance: 1e-11
        // relative, rounding amplified by the weights' size (∑|w| ≈ 1e3 here).
        let nodes = [-0.031, -0.019, -0.011, 0.0, 0.0095, 0.021, 0.028];
        let f = |x: f64| 1.0 + 2.0 * x - 3.0 * x * x + 4.0 * x.powi(3) + 5.0 * x.powi(4) - 6.0 * x.powi(5) + 7.0 * x.powi(6);
        let w = fornberg_weights(&nodes);
        let d1: f64 = (0..7).map(|j| w[1][j] * f(nodes[j])).sum();
        let d2: f64 = (0..7).map(|j| w[2][j] * f(nodes[j])).sum();
        assert!((d1 - 2.0).abs() < 1e-11 * 2.0, "{d1}");
        assert!((d2 + 6.0).abs() < 1e-9, "{d2}");
    }

    #[test]
    fn quintic_hermite_meets_its_end_conditions() {
        // Definition of the interpolant: value, slope, curvature at both ends.
        let a = quintic_hermite([1.0, -2.0, 3.0], [0.5, 4.0, -1.0]);
        let at = |u: f64| (0..6).map(|i| a[i] * u.powi(i as i32)).sum::<f64>();
        let d = |u: f64| (1..6).map(|i| i as f64 * a[i] * u.powi(i as i32 - 1)).sum::<f64>();
        let dd = |u: f64| (2..6).map(|i| (i * (i - 1)) as f64 * a[i] * u.powi(i as i32 - 2)).sum::<f64>();
        for (got, want) in [(at(0.0), 1.0), (d(0.0), -2.0), (dd(0.0), 3.0), (at(1.0), 0.5), (d(1.0), 4.0), (dd(1.0), -1.0)] {
            assert!((got - want).abs() < 1e-13, "{got} vs {want}");
        }
    }
}
