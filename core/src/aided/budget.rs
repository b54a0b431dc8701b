//! The error budget of a run by source: the filtered and smoothed covariance split into the
//! contributions of each independent source of error, with the gains of the real run.
//!
//! # The split
//!
//! With the gains fixed, the filter's error is a linear function of independent sources: the
//! initial error of each state group, each IMU noise term (the white noises behind velocity
//! and angle random walk, the drives of the Gauss–Markov biases) and each measurement set's
//! noise. Its covariance is then the sum of one covariance per source, each propagated by the
//! filter's own recursions with only that source present:
//!
//! ```text
//! propagation:  X_s ← Φ X_s Φᵀ + Q_{d,s}            (the filter's second-order step; Q_{d,s}
//!                                                     from the densities of source s only)
//! update:       X_s ← (I − K H) X_s (I − K H)ᵀ + K R_s Kᵀ   (R_s = R for the set of the
//!                                                     update, 0 otherwise; K of the real run)
//! ```
//!
//! starting from the initial covariance's diagonal block of each group (and, if the initial
//! covariance couples groups, one more source holding the couplings, which need not be
//! positive). The step and the update are linear in the covariance and the noise together,
//! so `Σ_s X_s = P` to rounding.
//!
//! The smoothed error of the [adjoint smoother](super::smoother) is
//! `ẽˢ = (I − P Λ) ẽ − P g`, where `ẽ` is the filtered error and `g`, the part of the adjoint
//! `λ` that comes from later noise, is independent of it. Its covariance splits the same way:
//!
//! ```text
//! Pˢ_s = (I − P Λ) X_s (I − P Λ)ᵀ + P R̄_s P
//! ```
//!
//! with `R̄_s` (the covariance of source `s`'s part of `g`) run backwards from zero after the
//! last time:
//!
//! ```text
//! back through a propagation:  R̄_s ← Φᵀ (R̄_s + Λ Q_{d,s} Λ) Φ          (Λ after the step)
//! back through an update:      R̄_s ← (I − K H)ᵀ R̄_s (I − K H) + B R_s Bᵀ,
//!                              B = −Hᵀ S⁻¹ + (I − K H)ᵀ Λ K             (Λ after the update)
//! ```
//!
//! (derived here from the adjoint recursions of the smoother: `λ ← −Hᵀ S⁻¹ ν + (I − K H)ᵀ λ`
//! with `ν = H ẽ⁻ − v` and `ẽ⁺ = (I − K H) ẽ⁻ + K v`, and `λ ← Φᵀ λ` with
//! `ẽ_{k+1} = Φ ẽ_k + w_k`). The smoothed total the budget reports is the same form with all
//! the sources, `(I − P Λ) P (I − P Λ)ᵀ + P Ḡ P`, `Ḡ` run by the same recursions with all the
//! noise: a sum of positive terms, which the parts add up to. It equals the smoother's
//! `P − P Λ P` when the filter's step is exactly `Φ P Φᵀ + Q_d`; the filter's step is that to
//! second order in the interval, and the two differ by a few parts in 10⁶ at 100 Hz.
//!
//! # Cost
//!
//! One covariance step per source per IMU step forwards and per noise or measurement source
//! backwards; the forward covariances of all sources are kept every
//! [`CHECKPOINT_EVERY`] propagations and rebuilt in between, one segment at a time.

use alloc::vec::Vec;

use nalgebra::{SMatrix, SVector};

use super::filter::joseph_update;
use super::gate::MAX_ROWS;
use super::smoother::{Adjoint, CHECKPOINT_EVERY, SmootherLog, UpdateRecord};
use crate::error::{Error, Result};
use crate::linearise::inertial::{NOISE_INPUTS, NoiseInput, noise_psd, propagate_covariance_second_order_in_place};

/// A group of error states with its own initial uncertainty, in state order.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum StateGroup {
    /// Latitude, longitude, height (states 0–2).
    Position,
    /// North, east, down velocity (3–5).
    Velocity,
    /// The attitude error (6–8).
    Attitude,
    /// Accelerometer bias (9–11).
    AccelerometerBias,
    /// Gyro bias (12–14).
    GyroBias,
    /// Accelerometer scale factor (15–17, 21 states).
    AccelerometerScaleFactor,
    /// Gyro scale factor (18–20, 21 states).
    GyroScaleFactor,
}

impl StateGroup {
    /// The groups of an `states`-state model (15 or 21), in state order.
    #[must_use]
    pub fn of_model(states: usize) -> &'static [StateGroup] {
        const ALL: [StateGroup; 7] = [
            StateGroup::Position,
            StateGroup::Velocity,
            StateGroup::Attitude,
            StateGroup::AccelerometerBias,
            StateGroup::GyroBias,
            StateGroup::AccelerometerScaleFactor,
            StateGroup::GyroScaleFactor,
        ];
        if states == 21 { &ALL } else { &ALL[..5] }
    }

    /// The first of its three states.
    #[must_use]
    pub fn first_state(self) -> usize {
        3 * self as usize
    }
}

/// An IMU noise term of the [`ImuErrorModel`](crate::nav::ImuErrorModel).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum NoiseTerm {
    /// Accelerometer white noise (velocity random walk).
    VelocityRandomWalk,
    /// Gyro white noise (angle random walk).
    AngleRandomWalk,
    /// The drive of the accelerometer's Gauss–Markov bias.
    AccelerometerMarkovBias,
    /// The drive of the gyro's Gauss–Markov bias.
    GyroMarkovBias,
}

impl NoiseTerm {
    /// All four, in the order of the noise inputs.
    pub const ALL: [NoiseTerm; 4] = [
        NoiseTerm::VelocityRandomWalk,
        NoiseTerm::AngleRandomWalk,
        NoiseTerm::AccelerometerMarkovBias,
        NoiseTerm::GyroMarkovBias,
    ];

    /// The first of its three noise inputs ([`noise_psd`] order).
    #[must_use]
    pub fn first_input(self) -> usize {
        3 * self as usize
    }
}

/// One independent source of error in a [budget](self).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum BudgetSource {
    /// The initial uncertainty of a state group (its diagonal block of the initial covariance).
    Initial(StateGroup),
    /// The initial covariance's couplings between groups (present only if it has any; not
    /// necessarily positive).
    InitialCoupling,
    /// An IMU noise term.
    Noise(NoiseTerm),
    /// The noise of a measurement set (its index in the run's sets).
    Measurements(usize),
}

impl BudgetSource {
    /// A short English name (`"initial attitude"`, `"angle random walk"`, `"measurements"`
    /// for every set: a binding adds the set's own name).
    #[must_use]
    pub fn name(&self) -> &'static str {
        match self {
            Self::Initial(StateGroup::Position) => "initial position",
            Self::Initial(StateGroup::Velocity) => "initial velocity",
            Self::Initial(StateGroup::Attitude) => "initial attitude",
            Self::Initial(StateGroup::AccelerometerBias) => "initial accelerometer bias",
            Self::Initial(StateGroup::GyroBias) => "initial gyro bias",
            Self::Initial(StateGroup::AccelerometerScaleFactor) => "initial accelerometer scale factor",
            Self::Initial(StateGroup::GyroScaleFactor) => "initial gyro scale factor",
            Self::InitialCoupling => "initial coupling between groups",
            Self::Noise(NoiseTerm::VelocityRandomWalk) => "velocity random walk",
            Self::Noise(NoiseTerm::AngleRandomWalk) => "angle random walk",
            Self::Noise(NoiseTerm::AccelerometerMarkovBias) => "accelerometer Gauss–Markov bias",
            Self::Noise(NoiseTerm::GyroMarkovBias) => "gyro Gauss–Markov bias",
            Self::Measurements(_) => "measurements",
        }
    }
}

/// Where [`SmootherLog::budget`] writes. `parts` holds, source by source in the order of
/// [`SmootherLog::budget_sources`], the variance of each requested state (source-major:
/// `parts[source * states.len() + j]`), in the error-state units squared.
pub trait BudgetSink {
    /// The filtered budget at IMU time `index` (forward order).
    fn filtered(&mut self, index: usize, parts: &[f64]);
    /// The smoothed budget at IMU time `index` (backward order), with the smoothed total
    /// `(I − P Λ) P (I − P Λ)ᵀ + P Ḡ P` of each requested state.
    fn smoothed(&mut self, index: usize, parts: &[f64], total: &[f64]) {
        let _ = (index, parts, total);
    }
}

/// What the budget needs of each source: the noise densities it drives (zero for the others)
/// and, for a measurement source, its set.
struct SourceModel {
    psd: SVector<f64, NOISE_INPUTS>,
    set: Option<usize>,
    /// Whether it has noise after the start (an initial source has none).
    later: bool,
}

impl SmootherLog {
    /// The sources of [`budget`](Self::budget) for a run over `sets` measurement sets, in the
    /// order of its parts: the state groups' initial uncertainty, the coupling between groups
    /// if the initial covariance has any, the four IMU noise terms, then each set.
    ///
    /// ```
    /// use rotaframe::aided::budget::{BudgetSource, NoiseTerm, StateGroup};
    /// # use nalgebra::Vector3;
    /// # use rotaframe::aided::{AidedNavigator, FilterSettings, SmootherLog};
    /// # use rotaframe::earth::Geodetic;
    /// # use rotaframe::nav::{ImuErrorModel, NavState, Strapdown, StrapdownConfig};
    /// # let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 0.0), Vector3::zeros(), Default::default())).unwrap();
    /// # let mut p0 = [0.0; 225];
    /// # for i in 0..15 { p0[i * 16] = 1e-6; }
    /// # let nav = AidedNavigator::new(ins, &ImuErrorModel::default(), &p0, 15, FilterSettings::default()).unwrap();
    /// let log = SmootherLog::new(&nav).unwrap();
    /// let sources = log.budget_sources(1);
    /// assert_eq!(sources.len(), 5 + 4 + 1); // a diagonal P0: no coupling source
    /// assert_eq!(sources[0], BudgetSource::Initial(StateGroup::Position));
    /// assert_eq!(sources[6], BudgetSource::Noise(NoiseTerm::AngleRandomWalk));
    /// assert_eq!(sources[9], BudgetSource::Measurements(0));
    /// ```
    #[must_use]
    pub fn budget_sources(&self, sets: usize) -> Vec<BudgetSource> {
        let n = self.states;
        let groups = StateGroup::of_model(n);
        let mut sources: Vec<BudgetSource> = groups.iter().map(|&g| BudgetSource::Initial(g)).collect();
        let p0 = &self.checkpoint_values[..n * n];
        let coupled = (0..n).any(|j| (0..n).any(|i| i / 3 != j / 3 && p0[j * n + i] != 0.0));
        if coupled {
            sources.push(BudgetSource::InitialCoupling);
        }
        sources.extend(NoiseTerm::ALL.iter().map(|&t| BudgetSource::Noise(t)));
        sources.extend((0..sets).map(BudgetSource::Measurements));
        sources
    }

    /// The error budget of the recorded run (see the [module documentation](self)): at every
    /// IMU time, the filtered and (with `smoothed`) the smoothed variance of each state in
    /// `states` split by source, handed to `sink`.
    ///
    /// # Errors
    /// [`Error::OutOfRange`] naming `states` for a state index not below the model's count;
    /// [`Error::Invalid`] naming `sets` if an update came from a set at or beyond `sets`, and
    /// naming `budget` if its storage cannot be had; as [`smooth`](Self::smooth) for a step
    /// that cannot be rebuilt.
    pub fn budget(&self, sets: usize, states: &[usize], smoothed: bool, sink: &mut impl BudgetSink) -> Result<()> {
        if let Some(&bad) = states.iter().find(|&&i| i >= self.states) {
            return Err(Error::OutOfRange { quantity: "states", value: bad as f64, min: 0.0, max: (self.states - 1) as f64 });
        }
        if self.updates.iter().any(|u| u.set >= sets) {
            return Err(Error::Invalid { quantity: "sets", reason: "an update came from a set beyond the number given" });
        }
        if self.states == 15 {
            Budget::<15>::new(self, sets, states).run(smoothed, sink)
        } else {
            Budget::<21>::new(self, sets, states).run(smoothed, sink)
        }
    }
}

/// The state of one budget computation over a log.
struct Budget<'a, const N: usize> {
    log: &'a SmootherLog,
    states: &'a [usize],
    sources: Vec<SourceModel>,
    /// Each source's part of the initial covariance.
    initial: Vec<SMatrix<f64, N, N>>,
    /// The source of each set.
    set_source: Vec<usize>,
    psd: SVector<f64, NOISE_INPUTS>,
}

/// The storage error of a budget.
const NO_ROOM: Error = Error::Invalid { quantity: "budget", reason: "not enough memory for the budget's covariances" };

impl<'a, const N: usize> Budget<'a, N> {
    fn new(log: &'a SmootherLog, sets: usize, states: &'a [usize]) -> Self {
        let list = log.budget_sources(sets);
        let psd = noise_psd(&log.model);
        let p0 = SMatrix::<f64, N, N>::from_column_slice(&log.checkpoint_values[..N * N]);
        let mut sources = Vec::with_capacity(list.len());
        let mut initial = Vec::with_capacity(list.len());
        let mut set_source = alloc::vec![0; sets];
        for (index, source) in list.iter().enumerate() {
            let mut part = SMatrix::<f64, N, N>::zeros();
            let mut model = SourceModel { psd: SVector::zeros(), set: None, later: true };
            match *source {
                BudgetSource::Initial(group) => {
                    let first = group.first_state();
                    part.fixed_view_mut::<3, 3>(first, first).copy_from(&p0.fixed_view::<3, 3>(first, first));
                    model.later = false;
                }
                BudgetSource::InitialCoupling => {
                    part = SMatrix::from_fn(|i, j| if i / 3 == j / 3 { 0.0 } else { p0[(i, j)] });
                    model.later = false;
                }
                BudgetSource::Noise(term) => {
                    let first = term.first_input();
                    model.psd.fixed_rows_mut::<3>(first).copy_from(&psd.fixed_rows::<3>(first));
                }
                BudgetSource::Measurements(set) => {
                    model.set = Some(set);
                    set_source[set] = index;
                }
            }
            sources.push(model);
            initial.push(part);
        }
        Self { log, states, sources, initial, set_source, psd }
    }

    /// The forward pass (handing out the filtered budget) and, with `smoothed`, the backward.
    fn run(&self, smoothed: bool, sink: &mut impl BudgetSink) -> Result<()> {
        let log = self.log;
        let count = self.sources.len();
        let mut x = self.initial.clone();
        let mut saved: Vec<SMatrix<f64, N, N>> = Vec::new();
        if smoothed {
            saved.try_reserve((log.pieces.len() / CHECKPOINT_EVERY + 1) * count).map_err(|_| NO_ROOM)?;
        }
        let mut parts = alloc::vec![0.0; count * self.states.len()];
        let (mut output, mut update) = (0, 0);
        for here in 0..=log.pieces.len() {
            while update < log.updates.len() && log.updates[update].piece == here {
                self.through_update(&mut x, &log.updates[update]);
                update += 1;
            }
            if smoothed && here % CHECKPOINT_EVERY == 0 {
                saved.extend_from_slice(&x);
            }
            while output < log.outputs.len() && log.outputs[output] == here {
                for (s, xs) in x.iter().enumerate() {
                    for (j, &i) in self.states.iter().enumerate() {
                        parts[s * self.states.len() + j] = xs[(i, i)];
                    }
                }
                sink.filtered(output, &parts);
                output += 1;
            }
            if here < log.pieces.len() {
                self.step(&mut x, here)?;
            }
        }
        if smoothed { self.backward(&saved, sink) } else { Ok(()) }
    }

    /// Every source's covariance through propagation `index`.
    fn step(&self, x: &mut [SMatrix<f64, N, N>], index: usize) -> Result<()> {
        let (f, g) = self.log.model_of::<N>(index)?;
        let interval = self.log.pieces[index].interval;
        for (xs, source) in x.iter_mut().zip(&self.sources) {
            propagate_covariance_second_order_in_place(&f, &g, &source.psd, xs, interval)?;
        }
        Ok(())
    }

    /// Every source's covariance through an update, with the run's gain.
    fn through_update(&self, x: &mut [SMatrix<f64, N, N>], record: &UpdateRecord) {
        let gain = record.gain::<N>();
        let own = self.set_source[record.set];
        for (s, xs) in x.iter_mut().enumerate() {
            let u = gain.jacobian * *xs;
            let mut innovation = u * gain.jacobian.transpose();
            if s == own {
                for i in 0..MAX_ROWS {
                    innovation[(i, i)] += record.noise_variance[i];
                }
            }
            joseph_update(xs, &gain.gain, &u, &innovation);
        }
    }

    /// The covariances after propagations `start ..= end` of the segment starting at
    /// checkpoint `c` (after the updates at each), source by source.
    fn segment(&self, saved: &[SMatrix<f64, N, N>], c: usize) -> Result<(usize, Vec<SMatrix<f64, N, N>>)> {
        let log = self.log;
        let count = self.sources.len();
        let start = c * CHECKPOINT_EVERY;
        let end = (start + CHECKPOINT_EVERY - 1).min(log.pieces.len());
        let mut out = Vec::new();
        out.try_reserve((end - start + 1) * count).map_err(|_| NO_ROOM)?;
        out.extend_from_slice(&saved[c * count..(c + 1) * count]);
        let mut update = log.updates.partition_point(|u| u.piece <= start);
        let mut x = saved[c * count..(c + 1) * count].to_vec();
        for here in start + 1..=end {
            self.step(&mut x, here - 1)?;
            while update < log.updates.len() && log.updates[update].piece == here {
                self.through_update(&mut x, &log.updates[update]);
                update += 1;
            }
            out.extend_from_slice(&x);
        }
        Ok((start, out))
    }

    /// The backward pass: the adjoint, each later source's `R̄_s` and their sum `Ḡ`, and the
    /// smoothed parts at every IMU time.
    fn backward(&self, saved: &[SMatrix<f64, N, N>], sink: &mut impl BudgetSink) -> Result<()> {
        let log = self.log;
        let count = self.sources.len();
        let m = self.states.len();
        let mut adjoint = Adjoint::<N>::zero();
        let mut later = alloc::vec![SMatrix::<f64, N, N>::zeros(); count];
        let mut total_later = SMatrix::<f64, N, N>::zeros();
        let (mut parts, mut total) = (alloc::vec![0.0; count * m], alloc::vec![0.0; m]);
        let (mut output, mut update) = (log.outputs.len(), log.updates.len());
        let mut here = log.pieces.len();
        let mut c = here / CHECKPOINT_EVERY;
        let (mut start, mut segment) = self.segment(saved, c)?;
        loop {
            let x = &segment[(here - start) * count..(here - start + 1) * count];
            while output > 0 && log.outputs[output - 1] == here {
                output -= 1;
                let p: SMatrix<f64, N, N> = x.iter().sum();
                let p_lambda = p * adjoint.information;
                for (j, &i) in self.states.iter().enumerate() {
                    let mut a_row: SVector<f64, N> = -p_lambda.row(i).transpose();
                    a_row[i] += 1.0;
                    let p_row: SVector<f64, N> = p.column(i).into_owned();
                    for (s, (xs, rs)) in x.iter().zip(&later).enumerate() {
                        parts[s * m + j] = a_row.dot(&(xs * a_row)) + p_row.dot(&(rs * p_row));
                    }
                    total[j] = a_row.dot(&(p * a_row)) + p_row.dot(&(total_later * p_row));
                }
                sink.smoothed(output, &parts, &total);
            }
            while update > 0 && log.updates[update - 1].piece == here {
                update -= 1;
                let record = &log.updates[update];
                let gain = record.gain::<N>();
                let a = SMatrix::<f64, N, N>::identity() - gain.gain * gain.jacobian;
                let b = a.transpose() * adjoint.information * gain.gain - gain.jacobian.transpose() * gain.s_inverse;
                let noise = b * nalgebra::Matrix3::from_diagonal(&record.noise_variance) * b.transpose();
                let own = self.set_source[record.set];
                for (s, rs) in later.iter_mut().enumerate() {
                    if self.sources[s].later {
                        *rs = a.transpose() * *rs * a;
                        if s == own {
                            *rs += noise;
                        }
                        crate::linearise::inertial::symmetrise(rs);
                    }
                }
                total_later = a.transpose() * total_later * a + noise;
                crate::linearise::inertial::symmetrise(&mut total_later);
                adjoint.through_update(&gain);
            }
            if here == 0 {
                return Ok(());
            }
            if here == start {
                c -= 1;
                (start, segment) = self.segment(saved, c)?;
            }
            here -= 1;
            let (f, g) = log.model_of::<N>(here)?;
            let interval = log.pieces[here].interval;
            let ft = f.transpose();
            let (no_input, no_noise) = (NoiseInput::<N>::zeros(), SVector::<f64, NOISE_INPUTS>::zeros());
            for (rs, source) in later.iter_mut().zip(&self.sources) {
                if source.later {
                    if source.set.is_none() {
                        add_noise_through_adjoint(rs, &adjoint.information, &f, &g, &source.psd, interval);
                    }
                    propagate_covariance_second_order_in_place(&ft, &no_input, &no_noise, rs, interval)?;
                }
            }
            add_noise_through_adjoint(&mut total_later, &adjoint.information, &f, &g, &self.psd, interval);
            propagate_covariance_second_order_in_place(&ft, &no_input, &no_noise, &mut total_later, interval)?;
            adjoint.through_second_order_step(&f, interval)?;
        }
    }
}

/// `R ← R + Λ Q_d Λ` for the filter's second-order `Q_d = B + Bᵀ`, `B = Σ_m q_m g_m w_mᵀ`,
/// `w_m = F g_m T²/2 + g_m T/2` (the `Q_d` its covariance step adds): `Λ Q_d Λ = Σ_m q_m
/// (a_m b_mᵀ + b_m a_mᵀ)` with `a_m = Λ g_m`, `b_m = Λ w_m`, rank two per input.
fn add_noise_through_adjoint<const N: usize>(
    r: &mut SMatrix<f64, N, N>,
    lambda: &SMatrix<f64, N, N>,
    f: &SMatrix<f64, N, N>,
    g: &NoiseInput<N>,
    psd: &SVector<f64, NOISE_INPUTS>,
    interval: f64,
) {
    for (column, &density) in g.column_iter().zip(psd.iter()) {
        if density == 0.0 {
            continue;
        }
        let w = (f * column) * (0.5 * interval * interval) + column * (0.5 * interval);
        let a: SVector<f64, N> = lambda * column;
        let b: SVector<f64, N> = lambda * w;
        let ab = a * b.transpose() * density;
        *r += ab + ab.transpose();
    }
}
