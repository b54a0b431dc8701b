//! Logged motions held by a frame graph (feature `alloc`): Cartesian samples in the parent, or
//! geodetic samples converted once to ECEF positions and body-to-ECEF attitudes
//!
//! ```text
//! r_e = geodetic_to_ecef(φ, λ, h),   q_eb = q_en(φ, λ) · q_nb,   v_e = C_en(φ, λ) v_n
//! ```
//!
//! and interpolated by [`SampledMotion`](crate::nav::SampledMotion) (its formulas: the
//! module [`nav::recorded`](crate::nav)).

use alloc::vec::Vec;

use nalgebra::Vector3;

use super::Motion;
use crate::earth::{EarthModel, Geodetic, ecef_from_ned_quaternion, geodetic_to_ecef};
use crate::error::{BatchError, Error, Result};
use crate::nav::{CartesianSamples, PoseSource, SampledMotion, SegmentCache};
use crate::rotation::quaternion_from_wxyz;

/// One geodetic sample in ECEF: position, body-to-ECEF quaternion, ECEF velocity if given.
type ConvertedSample = ([f64; 3], [f64; 4], Option<[f64; 3]>);

/// How a sampled edge's positions were given.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SamplesKind {
    /// Geodetic positions and body-to-NED attitudes, relative to the Earth-fixed frame
    /// (converted to ECEF positions and body-to-ECEF attitudes when attached).
    Geodetic,
    /// Cartesian positions and child-to-parent attitudes, in the parent.
    Cartesian,
}

/// Sampled poses held by a graph, in the parent's coordinates (see [`CartesianSamples`] for
/// the meaning of each array).
#[derive(Debug, Clone, PartialEq)]
struct OwnedPoses {
    times: Vec<f64>,
    positions: Vec<[f64; 3]>,
    attitudes: Vec<[f64; 4]>,
    velocities: Option<Vec<[f64; 3]>>,
    angular_rates: Option<Vec<[f64; 3]>>,
}

impl OwnedPoses {
    fn view(&self) -> CartesianSamples<'_> {
        CartesianSamples {
            times: &self.times,
            positions: &self.positions,
            attitudes: &self.attitudes,
            velocities: self.velocities.as_deref(),
            angular_rates: self.angular_rates.as_deref(),
        }
    }
}

impl PoseSource for OwnedPoses {
    fn len(&self) -> usize {
        self.view().len()
    }
    fn time(&self, index: usize) -> f64 {
        self.times[index]
    }
    fn pose(&self, index: usize) -> Result<(Vector3<f64>, nalgebra::Quaternion<f64>)> {
        self.view().pose(index)
    }
    fn rates(&self, index: usize) -> Result<Option<(Vector3<f64>, Vector3<f64>)>> {
        self.view().rates(index)
    }
}

/// A logged motion attached to a graph: samples interpolated by
/// [`SampledMotion`](crate::nav::SampledMotion) (no extrapolation outside their span).
#[derive(Debug, Clone, PartialEq)]
pub struct SampledEdge {
    kind: SamplesKind,
    motion: SampledMotion<OwnedPoses>,
}

impl PartialEq for SampledMotion<OwnedPoses> {
    fn eq(&self, other: &Self) -> bool {
        self.poses() == other.poses()
    }
}

impl SampledEdge {
    /// Cartesian samples in the parent: times (s, strictly increasing), positions (m),
    /// child-to-parent attitudes `[w, x, y, z]`, and optionally velocities (m/s, parent axes)
    /// and angular rates (rad/s, of the child relative to the parent, in child axes), both or
    /// neither.
    ///
    /// # Errors
    /// [`BatchError`] with the index of the first bad sample (as
    /// [`SampledMotion::new`](crate::nav::SampledMotion::new)); [`Error::LengthMismatch`] if
    /// the arrays differ in length.
    pub fn cartesian(
        times: Vec<f64>,
        positions: Vec<[f64; 3]>,
        attitudes: Vec<[f64; 4]>,
        velocities: Option<Vec<[f64; 3]>>,
        angular_rates: Option<Vec<[f64; 3]>>,
    ) -> core::result::Result<Self, BatchError> {
        let n = times.len();
        let lengths = [
            ("positions", positions.len()),
            ("attitudes", attitudes.len()),
            ("velocities", velocities.as_ref().map_or(n, Vec::len)),
            ("angular_rates", angular_rates.as_ref().map_or(n, Vec::len)),
        ];
        for (quantity, found) in lengths {
            if found != n {
                return Err(BatchError { index: 0, error: Error::LengthMismatch { quantity, found, expected: n } });
            }
        }
        let poses = OwnedPoses { times, positions, attitudes, velocities, angular_rates };
        Ok(Self { kind: SamplesKind::Cartesian, motion: SampledMotion::new(poses)? })
    }

    /// Geodetic samples relative to the Earth-fixed frame of `model`: times (s), positions,
    /// body-to-NED attitudes `[w, x, y, z]`, and optionally NED velocities relative to the
    /// Earth (m/s) and body rates relative to the Earth in body axes (rad/s). They are
    /// converted to ECEF positions and body-to-ECEF attitudes here, as
    /// [`RecordedTrajectory`](crate::nav::RecordedTrajectory) does.
    ///
    /// # Errors
    /// As [`cartesian`](Self::cartesian), the index that of the bad sample.
    pub fn geodetic(
        model: &EarthModel,
        times: Vec<f64>,
        positions: &[Geodetic],
        attitudes: &[[f64; 4]],
        velocities_ned: Option<&[[f64; 3]]>,
        angular_rates: Option<&[[f64; 3]]>,
    ) -> core::result::Result<Self, BatchError> {
        let n = times.len();
        let lengths = [
            ("positions", positions.len()),
            ("attitudes", attitudes.len()),
            ("velocities", velocities_ned.map_or(n, <[_]>::len)),
            ("angular_rates", angular_rates.map_or(n, <[_]>::len)),
        ];
        for (quantity, found) in lengths {
            if found != n {
                return Err(BatchError { index: 0, error: Error::LengthMismatch { quantity, found, expected: n } });
            }
        }
        let mut ecef = Vec::with_capacity(n);
        let mut body_to_ecef = Vec::with_capacity(n);
        let mut velocities = velocities_ned.map(|_| Vec::with_capacity(n));
        for (index, (position, attitude)) in positions.iter().zip(attitudes).enumerate() {
            let convert = || -> Result<ConvertedSample> {
                let r = geodetic_to_ecef(model, position)?;
                let q_en = ecef_from_ned_quaternion(position.latitude, position.longitude)?;
                let q = (q_en * quaternion_from_wxyz(*attitude, "attitude")?).into_inner();
                let v = velocities_ned.map(|v| (q_en * Vector3::from(v[index])).into());
                Ok((r.into(), [q.w, q.i, q.j, q.k], v))
            };
            let (r, q, v) = convert().map_err(|error| BatchError { index, error })?;
            ecef.push(r);
            body_to_ecef.push(q);
            if let (Some(vs), Some(v)) = (velocities.as_mut(), v) {
                vs.push(v);
            }
        }
        let mut edge = Self::cartesian(times, ecef, body_to_ecef, velocities, angular_rates.map(<[_]>::to_vec))?;
        edge.kind = SamplesKind::Geodetic;
        Ok(edge)
    }

    /// How the samples were given.
    #[must_use]
    pub fn kind(&self) -> SamplesKind {
        self.kind
    }

    /// The samples as held (in the parent's coordinates: ECEF for geodetic samples).
    #[must_use]
    pub fn samples(&self) -> CartesianSamples<'_> {
        self.motion.poses().view()
    }

    /// Time of the first and last sample (s).
    #[must_use]
    pub fn span(&self) -> (f64, f64) {
        (self.motion.start_time(), self.motion.end_time())
    }

    /// The interpolated motion at `time` (within the span), reusing `cache`.
    ///
    /// # Errors
    /// As [`SampledMotion::motion_at`](crate::nav::SampledMotion::motion_at).
    pub fn motion_at(&self, time: f64, cache: &mut SegmentCache) -> Result<Motion> {
        self.motion.motion_cached(time, cache)
    }
}
