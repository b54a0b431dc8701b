//! Fixed-interval smoothing of the closed-loop error-state filter: the best estimate at every
//! IMU time given all the measurements of a run, before and after, with its covariance.
//!
//! # The formulation
//!
//! The Rauch–Tung–Striebel smoother, computed in the **modified Bryson–Frazier** (adjoint)
//! form, which needs no inverse of a predicted covariance and suits the closed loop: the
//! filter feeds every correction back into its nominal trajectory and resets its error state,
//! so the filtered error relative to the nominal is zero at every time and the smoothed error
//! relative to it is
//!
//! ```text
//! δx̂ˢ_k = −P_k λ_k,        Pˢ_k = P_k − P_k Λ_k P_k
//! ```
//!
//! with the adjoint `λ` (an `N`-vector) and its information `Λ` (`N × N`) run backwards from
//! `λ = 0`, `Λ = 0` after the last time:
//!
//! ```text
//! through an update (ν = ẑ − z, S⁻¹, K, H of the real run, in reverse order at one time):
//!     λ ← −Hᵀ S⁻¹ ν + (I − K H)ᵀ λ,      Λ ← Hᵀ S⁻¹ H + (I − K H)ᵀ Λ (I − K H)
//! back through a propagation P ← Φ P Φᵀ + Q_d:
//!     λ ← Φᵀ λ,                          Λ ← Φᵀ Λ Φ
//! ```
//!
//! `Φ = I + F T + F² T²/2` being the filter's own second-order transition, rebuilt from the
//! stored nominal state and compensated rates (the same inputs, so the same `F` to the bit).
//! `P_k` is the filter's covariance after the updates at `k`. The smoothed state is the
//! filter's nominal state with `δx̂ˢ` removed (as a feedback removes an estimate) and the
//! smoothed sensor errors are the filtered ones plus `δx̂ˢ`'s sensor part. (H. E. Rauch, F. Tung
//! and C. T. Striebel, "Maximum likelihood estimates of linear dynamic systems", AIAA J. 3
//! (1965); the adjoint form: G. J. Bierman, *Factorization Methods for Discrete Sequential
//! Estimation* (1977), ch. X, "modified Bryson–Frazier"; its use with a closed-loop error-state
//! filter, whose resets relabel the error state without changing its covariance to first
//! order: Groves (2013), §14.3.4; chapter and section numbers from memory.)
//!
//! # Storage
//!
//! [`SmootherLog`] records a run as it goes (it is a [`RunSink`]): per propagation the nominal
//! state, compensated rates and interval (about 150 bytes); per accepted update its `H`, `S⁻¹`,
//! `ν` and `K`; the covariance after each accepted update and every
//! [`CHECKPOINT_EVERY`] propagations. The backward pass rebuilds the covariances between two
//! checkpoints by propagating forward again, one segment at a time, so it never holds a
//! covariance per IMU step. A run with [`FilterSettings::propagate_every`] above 1 is refused
//! (its covariance is not stepped per increment).
//!
//! [`FilterSettings::propagate_every`]: super::FilterSettings::propagate_every

use alloc::vec::Vec;

use nalgebra::{SMatrix, SVector, Vector3};

use super::filter::Gain;
use super::gate::MAX_ROWS;
use super::navigator::{AidedNavigator, GainTrace, RunSink};
use super::{Measurement, UpdateReport};
use crate::error::{Error, Result};
use crate::linearise::inertial::{NOISE_INPUTS, error_model, noise_psd, propagate_covariance_second_order_in_place};
use crate::nav::{ImuErrorModel, ImuIncrement, MechanizationState, NavState, StepMemory, Strapdown, StrapdownConfig};

/// Propagations between two stored covariances (besides those after every accepted update):
/// the longest segment the backward pass rebuilds.
pub const CHECKPOINT_EVERY: usize = 256;

/// The adjoint of the modified Bryson–Frazier smoother (see the [module documentation](self)):
/// `λ` and its information `Λ`, run backwards from zero.
///
/// ```
/// use nalgebra::{SMatrix, SVector};
/// use rotaframe::aided::smoother::Adjoint;
/// // A scalar random walk seen once: after the update the smoothed estimate moves toward it.
/// let mut adjoint = Adjoint::<1>::zero();
/// let p = SMatrix::<f64, 1, 1>::new(2.0);
/// adjoint.through_transition(&SMatrix::<f64, 1, 1>::identity());
/// let (estimate, covariance) = adjoint.smoothed(&p);
/// assert_eq!((estimate[0], covariance[(0, 0)]), (0.0, 2.0)); // nothing later: the filter's
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Adjoint<const N: usize> {
    /// `λ`.
    pub lambda: SVector<f64, N>,
    /// `Λ`, symmetric.
    pub information: SMatrix<f64, N, N>,
}

impl<const N: usize> Adjoint<N> {
    /// `λ = 0`, `Λ = 0`: after the last measurement.
    #[must_use]
    pub fn zero() -> Self {
        Self { lambda: SVector::zeros(), information: SMatrix::zeros() }
    }

    /// Back through one accepted update (rows beyond `gain.rows` zero in `H` and `K`):
    /// `λ ← −Hᵀ S⁻¹ ν + (I − K H)ᵀ λ`, `Λ ← Hᵀ S⁻¹ H + (I − K H)ᵀ Λ (I − K H)`.
    pub fn through_update(&mut self, gain: &Gain<N>) {
        let h = &gain.jacobian;
        let a = SMatrix::<f64, N, N>::identity() - gain.gain * h;
        let hs = h.transpose() * gain.s_inverse;
        self.lambda = a.transpose() * self.lambda - hs * gain.innovation;
        let mut information = a.transpose() * self.information * a + hs * h;
        crate::linearise::inertial::symmetrise(&mut information);
        self.information = information;
    }

    /// Back through a transition `x ← Φ x + w`: `λ ← Φᵀ λ`, `Λ ← Φᵀ Λ Φ`.
    pub fn through_transition(&mut self, phi: &SMatrix<f64, N, N>) {
        self.lambda = phi.transpose() * self.lambda;
        let mut information = phi.transpose() * self.information * phi;
        crate::linearise::inertial::symmetrise(&mut information);
        self.information = information;
    }

    /// Back through the filter's second-order step `Φ = I + F T + F² T²/2`: `λ ← Φᵀ λ` and
    /// `Λ ← Φᵀ Λ Φ` to second order in `T`, by the same form as the filter's own covariance step
    /// ([`propagate_covariance_second_order`](crate::linearise::inertial::propagate_covariance_second_order),
    /// `Φ P Φᵀ` to second order) with `Fᵀ` for `F` and no noise.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `p` if `Λ` overflows.
    pub fn through_second_order_step(&mut self, f: &SMatrix<f64, N, N>, interval: f64) -> Result<()> {
        let ft = f.transpose();
        let first = ft * self.lambda;
        self.lambda += (first + ft * first * (interval / 2.0)) * interval;
        let (g, psd) = (SMatrix::<f64, N, NOISE_INPUTS>::zeros(), SVector::<f64, NOISE_INPUTS>::zeros());
        propagate_covariance_second_order_in_place(&ft, &g, &psd, &mut self.information, interval)
    }

    /// The smoothed error estimate relative to the filter's and its covariance, given the
    /// filter's covariance `p` at the same point: `(−P λ, P − P Λ P)`.
    #[must_use]
    pub fn smoothed(&self, p: &SMatrix<f64, N, N>) -> (SVector<f64, N>, SMatrix<f64, N, N>) {
        let mut covariance = p - p * self.information * p;
        crate::linearise::inertial::symmetrise(&mut covariance);
        (-(p * self.lambda), covariance)
    }

    /// [`smoothed`](Self::smoothed) with the diagonal of the covariance only: one product
    /// `M = Λ P` and `diag(P M)_i = Σ_k P_ki M_ki` (`P` symmetric), on padded rows with an
    /// AVX2 twin for 15 and 21 states.
    #[must_use]
    pub fn smoothed_variances(&self, p: &SMatrix<f64, N, N>) -> (SVector<f64, N>, SVector<f64, N>) {
        let mut quadratic = SVector::<f64, N>::zeros();
        let (l, pp, out) = (self.information.as_slice(), p.as_slice(), quadratic.as_mut_slice());
        match N {
            15 => crate::fast_call!(quadratic_diagonal_15_fast, quadratic_diagonal_body::<15, 16>, (l, pp, out)),
            21 => crate::fast_call!(quadratic_diagonal_21_fast, quadratic_diagonal_body::<21, 24>, (l, pp, out)),
            _ => quadratic_diagonal_body::<N, N>(l, pp, out),
        }
        let variances = SVector::<f64, N>::from_fn(|i, _| p[(i, i)] - quadratic[i]);
        (-(p * self.lambda), variances)
    }
}

crate::fast_twin!(fn quadratic_diagonal_15_fast(l: &[f64], p: &[f64], out: &mut [f64]) -> () = quadratic_diagonal_body::<15, 16>);
crate::fast_twin!(fn quadratic_diagonal_21_fast(l: &[f64], p: &[f64], out: &mut [f64]) -> () = quadratic_diagonal_body::<21, 24>);

/// `out_i = (P Λ P)_ii` for symmetric `P` and `Λ` (column-major, so their columns are their
/// rows), on rows padded to `W` lanes: `M = Λ P` by rows, then `Σ_k P_k ∘ M_k` over rows.
#[inline(always)]
fn quadratic_diagonal_body<const N: usize, const W: usize>(l: &[f64], p: &[f64], out: &mut [f64]) {
    let mut p_rows = [[0.0f64; W]; N];
    for (row, column) in p_rows.iter_mut().zip(p.chunks_exact(N)) {
        row[..N].copy_from_slice(column);
    }
    let mut sum = [0.0f64; W];
    for (l_row, p_row) in l.chunks_exact(N).zip(&p_rows) {
        let mut m_row = [0.0f64; W];
        for (&value, x_row) in l_row.iter().zip(&p_rows) {
            for (m, x) in m_row.iter_mut().zip(x_row) {
                *m += value * x;
            }
        }
        for ((s, m), x) in sum.iter_mut().zip(&m_row).zip(p_row) {
            *s += m * x;
        }
    }
    out.copy_from_slice(&sum[..N]);
}

/// One smoothed IMU time, as [`SmootherLog::smooth`] hands it out.
#[derive(Debug, Clone, Copy)]
pub struct SmoothedPoint<'a> {
    /// The smoothed navigation state.
    pub state: NavState,
    /// The smoothed stepper state (for stepping on from it: interpolation).
    pub mechanization: MechanizationState,
    /// The smoothed sensor errors in state order (`states − 9` values), as
    /// [`AidedNavigator::write_sensor_errors`].
    pub sensor_errors: &'a [f64],
    /// 1σ of every error state (`states` values).
    pub sigma: &'a [f64],
    /// The smoothed error estimate of the filtered solution (filtered minus smoothed, in the
    /// error-state order and units; `states` values).
    pub correction: &'a [f64],
}

/// Where [`SmootherLog::smooth`] writes, in backward order.
pub trait SmoothedSink {
    /// The smoothed solution at IMU time `index` (as [`RunSink::step`] numbered it).
    fn point(&mut self, index: usize, point: &SmoothedPoint<'_>);
    /// The smoothed covariance (`states²` values) at accepted-measurement epoch `index`
    /// (numbered from 0 in the order of the run).
    fn epoch(&mut self, index: usize, covariance: &[f64]) {
        let _ = (index, covariance);
    }
}

/// One propagation of the run: where it started and what drove it.
#[derive(Debug, Clone, Copy)]
pub(super) struct Piece {
    pub(super) state: MechanizationState,
    pub(super) rate: Vector3<f64>,
    pub(super) force: Vector3<f64>,
    pub(super) interval: f64,
}

/// One accepted update: its place (the number of propagations before it) and its algebra.
#[derive(Debug, Clone, Copy)]
pub(super) struct UpdateRecord {
    pub(super) piece: usize,
    /// The measurement set it came from.
    pub(super) set: usize,
    pub(super) rows: usize,
    pub(super) jacobian: [f64; MAX_ROWS * 21],
    pub(super) s_inverse: nalgebra::Matrix3<f64>,
    pub(super) innovation: Vector3<f64>,
    pub(super) gain: [f64; MAX_ROWS * 21],
    /// The diagonal of `R`.
    pub(super) noise_variance: Vector3<f64>,
}

impl UpdateRecord {
    /// The record as a [`Gain`].
    pub(super) fn gain<const N: usize>(&self) -> Gain<N> {
        Gain::<N> {
            rows: self.rows,
            jacobian: SMatrix::from_column_slice(&self.jacobian[..MAX_ROWS * N]),
            s_inverse: self.s_inverse,
            innovation: self.innovation,
            gain: SMatrix::from_column_slice(&self.gain[..MAX_ROWS * N]),
            noise_variance: self.noise_variance,
        }
    }
}

/// A run recorded for the backward pass; see the [module documentation](self).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::aided::{AidedNavigator, FilterSettings, Measurement, MeasurementSlices};
/// use rotaframe::aided::smoother::{SmoothedPoint, SmoothedSink, SmootherLog};
/// use rotaframe::earth::{earth_rate_ned, gravity_ned, Geodetic, WGS84};
/// use rotaframe::nav::{ImuErrorModel, NavState, Strapdown, StrapdownConfig};
/// let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), Default::default())).unwrap();
/// let mut p0 = [0.0; 225];
/// for i in 0..15 { p0[i * 16] = if i < 2 { 1e-12 } else { 1e-4 }; }
/// let mut nav = AidedNavigator::new(ins, &ImuErrorModel::default(), &p0, 15, FilterSettings::default()).unwrap();
/// let times: Vec<f64> = (0..=200).map(|k| k as f64 * 0.01).collect();
/// let w = earth_rate_ned(&WGS84, here.latitude).unwrap() * 0.01;
/// let f = -gravity_ned(&WGS84, here.latitude, here.height).unwrap() * 0.01;
/// let (dtheta, dv) = (vec![[w.x, w.y, w.z]; 200], vec![[f.x, f.y, f.z]; 200]);
/// let still = [Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(0.01) }; 2];
/// let zupts = MeasurementSlices { times: &[1.0, 2.0], measurements: &still };
/// let mut log = SmootherLog::new(&nav).unwrap();
/// nav.run(&times, &dtheta, &dv, &[&zupts], &mut log).unwrap();
/// // The velocity σ half-way between the start and the first update, smoothed.
/// struct Sigma(Vec<f64>);
/// impl SmoothedSink for Sigma {
///     fn point(&mut self, index: usize, point: &SmoothedPoint<'_>) { self.0[index] = point.sigma[3]; }
/// }
/// let mut sigma = Sigma(vec![0.0; 201]);
/// log.smooth(&mut sigma).unwrap();
/// assert!(sigma.0[50] < 1e-2); // the filter's is still about 1e-2 there
/// ```
#[derive(Debug, Clone)]
pub struct SmootherLog {
    pub(super) states: usize,
    pub(super) config: StrapdownConfig,
    pub(super) model: ImuErrorModel,
    pub(super) pieces: Vec<Piece>,
    pub(super) updates: Vec<UpdateRecord>,
    pub(super) checkpoint_pieces: Vec<usize>,
    pub(super) checkpoint_values: Vec<f64>,
    /// Per output (IMU time): the number of propagations before it.
    pub(super) outputs: Vec<usize>,
    /// Per output: the filtered sensor errors in state order.
    sensor_errors: Vec<f64>,
    /// Per accepted epoch: the number of propagations before it.
    epochs: Vec<usize>,
    /// The nominal state at the last output.
    last_state: MechanizationState,
}

impl SmootherLog {
    /// An empty log for a run of `navigator` from its present state.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `smooth` if the navigator propagates its covariance less often
    /// than every increment.
    pub fn new(navigator: &AidedNavigator) -> Result<Self> {
        if navigator.settings().propagate_every != 1 {
            return Err(Error::Invalid {
                quantity: "smooth",
                reason: "smoothing needs the covariance propagated at every increment (propagate_every = 1)",
            });
        }
        let states = navigator.states();
        let mut covariance = alloc::vec![0.0; states * states];
        navigator.write_covariance(&mut covariance)?;
        let (config, state, _) = navigator.strapdown().parts();
        Ok(Self {
            states,
            config,
            model: *navigator.imu(),
            pieces: Vec::new(),
            updates: Vec::new(),
            checkpoint_pieces: alloc::vec![0],
            checkpoint_values: covariance,
            outputs: Vec::new(),
            sensor_errors: Vec::new(),
            epochs: Vec::new(),
            last_state: state,
        })
    }

    /// Reserves room for a run of `increments` IMU increments with at most `measurements`
    /// measurements, so that recording it allocates nothing more (a caller that must not abort
    /// on a failed allocation, such as a binding, calls this first).
    ///
    /// # Errors
    /// The allocator's, if the room cannot be had; the log is then unchanged in content.
    pub fn try_reserve(
        &mut self,
        increments: usize,
        measurements: usize,
    ) -> core::result::Result<(), alloc::collections::TryReserveError> {
        let pieces = increments.saturating_add(measurements);
        let checkpoints = measurements.saturating_add(pieces / CHECKPOINT_EVERY).saturating_add(1);
        self.pieces.try_reserve(pieces)?;
        self.updates.try_reserve(measurements)?;
        self.checkpoint_pieces.try_reserve(checkpoints)?;
        self.checkpoint_values.try_reserve(checkpoints.saturating_mul(self.states * self.states))?;
        self.outputs.try_reserve(increments.saturating_add(1))?;
        self.sensor_errors.try_reserve(increments.saturating_add(1).saturating_mul(self.states - 9))?;
        self.epochs.try_reserve(measurements)?;
        Ok(())
    }

    /// The number of states.
    #[must_use]
    pub fn states(&self) -> usize {
        self.states
    }

    /// The number of IMU times recorded.
    #[must_use]
    pub fn len(&self) -> usize {
        self.outputs.len()
    }

    /// Whether no IMU time was recorded.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.outputs.is_empty()
    }

    /// The bytes the log holds (for memory budgets).
    #[must_use]
    pub fn bytes(&self) -> usize {
        use core::mem::size_of;
        self.pieces.capacity() * size_of::<Piece>()
            + self.updates.capacity() * size_of::<UpdateRecord>()
            + (self.checkpoint_pieces.capacity() + self.outputs.capacity() + self.epochs.capacity()) * size_of::<usize>()
            + (self.checkpoint_values.capacity() + self.sensor_errors.capacity()) * size_of::<f64>()
    }

    /// Stores the covariance as a checkpoint at the present propagation count (replacing one
    /// already there).
    fn checkpoint(&mut self, covariance: &[f64]) {
        let here = self.pieces.len();
        let size = self.states * self.states;
        if self.checkpoint_pieces.last() == Some(&here) {
            let start = self.checkpoint_values.len() - size;
            self.checkpoint_values[start..].copy_from_slice(covariance);
        } else {
            self.checkpoint_pieces.push(here);
            self.checkpoint_values.extend_from_slice(covariance);
        }
    }

    /// Runs the backward pass, handing out the smoothed solution at every IMU time and the
    /// smoothed covariance at every accepted epoch (both in backward order).
    ///
    /// # Errors
    /// As [`error_model`] and [`Strapdown::remove_error`] (a smoothed correction that is not
    /// finite); [`Error::Invalid`] naming `p` if a rebuilt covariance overflows.
    pub fn smooth(&self, sink: &mut impl SmoothedSink) -> Result<()> {
        if self.states == 15 { self.backward::<15>(sink) } else { self.backward::<21>(sink) }
    }

    /// The filter's `F` and `G` of propagation `index`.
    pub(super) fn model_of<const N: usize>(
        &self,
        index: usize,
    ) -> Result<(SMatrix<f64, N, N>, crate::linearise::inertial::NoiseInput<N>)> {
        let piece = &self.pieces[index];
        let times = (&self.model.accelerometer.markov_time, &self.model.gyro.markov_time);
        error_model::<N>(&self.config, &piece.state, &piece.force, &piece.rate, times)
    }

    /// Segment `c` rebuilt: the covariances after propagations `start ..= end` (`start` the
    /// checkpoint's count, `end` the next checkpoint's less one, or the last for the last
    /// segment) and the `F` of propagations `start ..` up to the next checkpoint.
    fn segment<const N: usize>(&self, c: usize, psd: &SVector<f64, NOISE_INPUTS>) -> Result<Segment<N>> {
        let size = N * N;
        let start = self.checkpoint_pieces[c];
        let (last_covariance, models_end) = match self.checkpoint_pieces.get(c + 1) {
            Some(&next) => (next - 1, next),
            None => (self.pieces.len(), self.pieces.len()),
        };
        let mut covariances = Vec::with_capacity(last_covariance - start + 1);
        let mut models = Vec::with_capacity(models_end - start);
        covariances.push(SMatrix::<f64, N, N>::from_column_slice(&self.checkpoint_values[c * size..(c + 1) * size]));
        for index in start..models_end {
            let (f, g) = self.model_of::<N>(index)?;
            if index < last_covariance {
                let mut p = covariances[covariances.len() - 1];
                propagate_covariance_second_order_in_place(&f, &g, psd, &mut p, self.pieces[index].interval)?;
                covariances.push(p);
            }
            models.push(f);
        }
        Ok(Segment { start, covariances, models })
    }

    /// The backward pass for `N` states; with `std` and more than one core, the covariances of
    /// the next segment are rebuilt on a second thread while this one is walked (the same
    /// arithmetic, so the same bits).
    fn backward<const N: usize>(&self, sink: &mut impl SmoothedSink) -> Result<()> {
        let psd = noise_psd(&self.model);
        #[cfg(feature = "std")]
        let count = self.checkpoint_pieces.len();
        #[cfg(feature = "std")]
        if count > 2 && std::thread::available_parallelism().is_ok_and(|n| n.get() > 1) {
            return std::thread::scope(|scope| {
                // At most one segment waits in the channel: memory stays a few segments.
                let (sender, receiver) = std::sync::mpsc::sync_channel(1);
                let psd = &psd;
                scope.spawn(move || {
                    for c in (0..count).rev() {
                        let segment = self.segment::<N>(c, psd);
                        let failed = segment.is_err();
                        if sender.send(segment).is_err() || failed {
                            break;
                        }
                    }
                });
                let lost = Error::Invalid { quantity: "smooth", reason: "the rebuilding thread stopped" };
                self.walk(|_| receiver.recv().unwrap_or(Err(lost)), sink)
            });
        }
        self.walk(|c| self.segment::<N>(c, &psd), sink)
    }

    /// The backward walk over the segments, last first, `next(c)` giving segment `c`.
    fn walk<const N: usize>(
        &self,
        mut next: impl FnMut(usize) -> Result<Segment<N>>,
        sink: &mut impl SmoothedSink,
    ) -> Result<()> {
        let mut adjoint = Adjoint::<N>::zero();
        let mut c = self.checkpoint_pieces.len() - 1;
        let mut current = next(c)?;
        let (mut output, mut epoch, mut update) = (self.outputs.len(), self.epochs.len(), self.updates.len());
        let (mut sigma, mut sensor) = ([0.0; 21], [0.0; 12]);
        let mut here = self.pieces.len();
        loop {
            let p = &current.covariances[here - current.start];
            while output > 0 && self.outputs[output - 1] == here {
                output -= 1;
                let (correction, variances) = adjoint.smoothed_variances(p);
                for (s, v) in sigma.iter_mut().zip(variances.iter()) {
                    *s = crate::math::sqrt(v.max(0.0));
                }
                let filtered = &self.sensor_errors[(N - 9) * output..(N - 9) * (output + 1)];
                for ((s, f), c) in sensor.iter_mut().zip(filtered).zip(correction.iter().skip(9)) {
                    *s = f + c;
                }
                let base = self.pieces.get(here).map_or(self.last_state, |piece| piece.state);
                let mut stepper = Strapdown::from_parts(self.config, base, StepMemory::default())?;
                let v = |i: usize| Vector3::new(correction[i], correction[i + 1], correction[i + 2]);
                stepper.remove_error(&v(0), &v(3), &v(6))?;
                let point = SmoothedPoint {
                    state: stepper.state(),
                    mechanization: stepper.parts().1,
                    sensor_errors: &sensor[..N - 9],
                    sigma: &sigma[..N],
                    correction: correction.as_slice(),
                };
                sink.point(output, &point);
            }
            while epoch > 0 && self.epochs[epoch - 1] == here {
                epoch -= 1;
                let (_, covariance) = adjoint.smoothed(p);
                sink.epoch(epoch, covariance.as_slice());
            }
            while update > 0 && self.updates[update - 1].piece == here {
                update -= 1;
                adjoint.through_update(&self.updates[update].gain::<N>());
            }
            if here == 0 {
                return Ok(());
            }
            if here == current.start {
                c -= 1;
                current = next(c)?;
            }
            here -= 1;
            adjoint.through_second_order_step(&current.models[here - current.start], self.pieces[here].interval)?;
        }
    }
}

/// A run recorded call by call, for a filter driven one increment and one measurement at a
/// time (the C interface): the records [`AidedNavigator::run`] would hand a [`SmootherLog`]
/// over the same calls. An IMU time is closed (its solution recorded) by the next
/// [`predict`](Self::predict) or by [`log`](Self::log); the updates between two predicts are
/// those of one time.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::aided::{AidedNavigator, FilterSettings, Measurement};
/// use rotaframe::aided::smoother::{SmoothedPoint, SmoothedSink, SmootherRecorder};
/// use rotaframe::earth::{earth_rate_ned, gravity_ned, Geodetic, WGS84};
/// use rotaframe::nav::{ImuErrorModel, ImuIncrement, NavState, Strapdown, StrapdownConfig};
/// let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), Default::default())).unwrap();
/// let mut p0 = [0.0; 225];
/// for i in 0..15 { p0[i * 16] = if i < 2 { 1e-12 } else { 1e-4 }; }
/// let mut nav = AidedNavigator::new(ins, &ImuErrorModel::default(), &p0, 15, FilterSettings::default()).unwrap();
/// let mut recorder = SmootherRecorder::new(&nav).unwrap();
/// let still = ImuIncrement::new(
///     earth_rate_ned(&WGS84, here.latitude).unwrap() * 0.01,
///     -gravity_ned(&WGS84, here.latitude, here.height).unwrap() * 0.01,
///     0.01,
/// );
/// for k in 1..=200 {
///     recorder.predict(&mut nav, &still).unwrap();
///     if k % 100 == 0 {
///         recorder.update(&mut nav, &Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(0.01) }, 0).unwrap();
///     }
/// }
/// struct Sigma(Vec<f64>);
/// impl SmoothedSink for Sigma {
///     fn point(&mut self, index: usize, point: &SmoothedPoint<'_>) { self.0[index] = point.sigma[3]; }
/// }
/// let mut sigma = Sigma(vec![0.0; 201]);
/// recorder.log(&nav).unwrap().smooth(&mut sigma).unwrap();
/// assert!(sigma.0[50] < 1e-2); // the filter's is still about 1e-2 there
/// ```
#[derive(Debug, Clone)]
pub struct SmootherRecorder {
    log: SmootherLog,
    /// The IMU times recorded.
    recorded: usize,
    /// Whether the present IMU time is recorded.
    closed: bool,
    /// Whether a measurement was processed at the present time, and whether one was accepted.
    processed: bool,
    accepted: bool,
    /// Measurements recorded per set.
    counts: [usize; super::MAX_MEASUREMENT_SETS],
    /// The navigator's state after the last recorded call.
    last: MechanizationState,
}

impl SmootherRecorder {
    /// A recorder of `navigator`'s calls from its present state (the first IMU time).
    ///
    /// # Errors
    /// As [`SmootherLog::new`].
    pub fn new(navigator: &AidedNavigator) -> Result<Self> {
        Ok(Self {
            log: SmootherLog::new(navigator)?,
            recorded: 0,
            closed: false,
            processed: false,
            accepted: false,
            counts: [0; super::MAX_MEASUREMENT_SETS],
            last: navigator.strapdown().parts().1,
        })
    }

    /// Room for `increments` more predictions and `measurements` more updates (as
    /// [`SmootherLog::try_reserve`]), so that recording them allocates nothing.
    ///
    /// # Errors
    /// The allocator's.
    pub fn try_reserve(
        &mut self,
        increments: usize,
        measurements: usize,
    ) -> core::result::Result<(), alloc::collections::TryReserveError> {
        self.log.try_reserve(increments, measurements)
    }

    /// The number of IMU times (the present one included).
    #[must_use]
    pub fn len(&self) -> usize {
        self.recorded + usize::from(!self.closed)
    }

    /// Never empty: the start is an IMU time.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        false
    }

    /// The number of states.
    #[must_use]
    pub fn states(&self) -> usize {
        self.log.states
    }

    /// Refuses a navigator that is not the one recorded (changed by calls the recorder did not
    /// see).
    fn check(&self, navigator: &AidedNavigator) -> Result<()> {
        if navigator.states() != self.log.states || navigator.strapdown().parts().1 != self.last {
            return Err(Error::Invalid {
                quantity: "nav",
                reason: "the navigator changed outside the recorder (every call must go through it)",
            });
        }
        Ok(())
    }

    /// Records the present IMU time's solution (once).
    fn close(&mut self, navigator: &AidedNavigator) {
        if !self.closed {
            if self.processed {
                self.log.epoch(navigator.time().unwrap_or(0.0), navigator, self.accepted);
            }
            self.log.step(self.recorded, navigator);
            self.recorded += 1;
            self.closed = true;
        }
    }

    /// Closes the present IMU time and advances `navigator` by `increment`, recording the
    /// propagation. On error nothing is recorded and the navigator is unchanged.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `nav` for a navigator changed outside the recorder; as
    /// [`AidedNavigator::predict`].
    pub fn predict(&mut self, navigator: &mut AidedNavigator, increment: &ImuIncrement) -> Result<()> {
        self.check(navigator)?;
        let start = navigator.strapdown().parts().1;
        let mut next = *navigator;
        next.predict(increment)?;
        self.close(navigator);
        self.log.propagated(&start, increment.interval, &next);
        *navigator = next;
        self.last = navigator.strapdown().parts().1;
        (self.closed, self.processed, self.accepted) = (false, false, false);
        Ok(())
    }

    /// Applies a measurement of set `set` at the present IMU time, recording its gain if it is
    /// accepted. On error nothing is recorded and the navigator is unchanged.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `nav` for a navigator changed outside the recorder or a time
    /// already closed by [`log`](Self::log); [`Error::OutOfRange`] naming `set` (below
    /// [`MAX_MEASUREMENT_SETS`](super::MAX_MEASUREMENT_SETS)); as [`AidedNavigator::update`].
    pub fn update(&mut self, navigator: &mut AidedNavigator, measurement: &Measurement, set: usize) -> Result<UpdateReport> {
        self.check(navigator)?;
        if self.closed {
            return Err(Error::Invalid { quantity: "nav", reason: "this time was closed by `log`: predict before updating" });
        }
        let count = *self.counts.get(set).ok_or(Error::OutOfRange {
            quantity: "set",
            value: set as f64,
            min: 0.0,
            max: (super::MAX_MEASUREMENT_SETS - 1) as f64,
        })?;
        let mut next = *navigator;
        let report = next.update_traced(measurement, set, count, &mut self.log)?;
        *navigator = next;
        self.last = navigator.strapdown().parts().1;
        self.counts[set] += 1;
        self.processed = true;
        self.accepted |= report.accepted;
        Ok(report)
    }

    /// The log, with the present IMU time closed: ready for [`SmootherLog::smooth`] and
    /// [`SmootherLog::budget`]. A later [`predict`](Self::predict) goes on recording.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `nav` for a navigator changed outside the recorder.
    pub fn log(&mut self, navigator: &AidedNavigator) -> Result<&SmootherLog> {
        self.check(navigator)?;
        self.close(navigator);
        Ok(&self.log)
    }
}

/// One rebuilt segment of the backward pass (see [`SmootherLog::segment`]).
struct Segment<const N: usize> {
    start: usize,
    covariances: Vec<SMatrix<f64, N, N>>,
    models: Vec<SMatrix<f64, N, N>>,
}

impl RunSink for SmootherLog {
    const TRACES: bool = true;

    fn propagated(&mut self, start: &MechanizationState, interval: f64, navigator: &AidedNavigator) {
        let (rate, force) = navigator.last_rates();
        self.pieces.push(Piece { state: *start, rate, force, interval });
        let last = self.checkpoint_pieces.last().copied().unwrap_or(0);
        if self.pieces.len() - last >= CHECKPOINT_EVERY {
            let size = self.states * self.states;
            let start = self.checkpoint_values.len();
            self.checkpoint_values.resize(start + size, 0.0);
            // The navigator's own size: cannot fail.
            let _ = navigator.write_covariance(&mut self.checkpoint_values[start..]);
            self.checkpoint_pieces.push(self.pieces.len());
        }
    }

    fn updated(&mut self, gain: &GainTrace<'_>, covariance: &[f64]) {
        let mut record = UpdateRecord {
            piece: self.pieces.len(),
            set: 0,
            rows: gain.rows,
            jacobian: [0.0; MAX_ROWS * 21],
            s_inverse: *gain.s_inverse,
            innovation: *gain.innovation,
            gain: [0.0; MAX_ROWS * 21],
            noise_variance: *gain.noise_variance,
        };
        record.jacobian[..gain.jacobian.len()].copy_from_slice(gain.jacobian);
        record.gain[..gain.gain.len()].copy_from_slice(gain.gain);
        self.updates.push(record);
        self.checkpoint(covariance);
    }

    fn step(&mut self, index: usize, navigator: &AidedNavigator) {
        debug_assert_eq!(index, self.outputs.len());
        self.outputs.push(self.pieces.len());
        let start = self.sensor_errors.len();
        self.sensor_errors.resize(start + self.states - 9, 0.0);
        // The navigator's own size: cannot fail.
        let _ = navigator.write_sensor_errors(&mut self.sensor_errors[start..]);
        self.last_state = navigator.strapdown().parts().1;
    }

    fn measurement(&mut self, set: usize, _index: usize, report: &super::UpdateReport) {
        // `updated` came just before, for this measurement.
        if report.accepted
            && let Some(last) = self.updates.last_mut()
        {
            last.set = set;
        }
    }

    fn epoch(&mut self, _time: f64, _navigator: &AidedNavigator, accepted: bool) {
        if accepted {
            self.epochs.push(self.pieces.len());
        }
    }
}
