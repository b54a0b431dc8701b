//! A seeded Monte Carlo harness for the aided navigator: the manoeuvring trajectory of
//! [`trajectories`](crate::trajectories) flown with an invented tactical-grade IMU and 1 Hz
//! GNSS position and velocity fixes at a lever arm, the filter's errors measured against the
//! truth. The antenna's true position and velocity come from the frame machinery
//! (`FrameMotion::map_point`), not from the filter's lever-arm models.

use nalgebra::{SMatrix, SVector, UnitQuaternion, Vector3};
use rotaframe::aided::{AidedFilter, FilterSettings, Measurement};
use rotaframe::earth::{Geodetic, GravityModel, WGS84, ecef_to_geodetic, ned_from_ecef};
use rotaframe::frames::PointKinematics;
use rotaframe::nalgebra;
use rotaframe::nav::{
    ImuErrorGenerator, ImuErrorModel, ImuIncrement, NavState, SensorErrorModel, Strapdown, StrapdownConfig, imu_increments,
};

use crate::Seeded;
use crate::trajectories::Manoeuvres;

/// IMU rate (Hz) and run length (s).
pub const RATE: f64 = 50.0;
/// Run length (s).
pub const DURATION: f64 = 240.0;
/// GNSS antenna lever arm (m, body axes).
pub const LEVER_ARM: [f64; 3] = [1.2, 0.3, -0.8];
/// GNSS position 1σ north, east, down (m) and velocity 1σ (m/s).
pub const POSITION_SIGMA: [f64; 3] = [1.0, 1.0, 2.0];
/// GNSS velocity 1σ per axis (m/s).
pub const VELOCITY_SIGMA: f64 = 0.05;

/// An invented industrial MEMS IMU whose biases wander (Gauss–Markov, 5 minutes): 0.3
/// deg/√h angle random walk, a 10 deg/h gyro bias instability, 0.1 m/s/√h velocity random
/// walk, a 2 mg accelerometer bias instability. Through a GNSS outage its drift is mostly
/// bias that the fixes after the outage reveal.
#[must_use]
pub fn mems_imu() -> ImuErrorModel {
    ImuErrorModel {
        gyro: SensorErrorModel {
            noise_density: Vector3::repeat(0.3_f64.to_radians() / 60.0),
            markov_sigma: Vector3::repeat(10.0_f64.to_radians() / 3600.0),
            markov_time: Vector3::repeat(300.0),
            ..SensorErrorModel::default()
        },
        accelerometer: SensorErrorModel {
            noise_density: Vector3::repeat(0.1 / 60.0),
            markov_sigma: Vector3::repeat(2e-2),
            markov_time: Vector3::repeat(300.0),
            ..SensorErrorModel::default()
        },
    }
}

/// An invented tactical-grade IMU: 0.1 deg/√h angle random walk, a 1 deg/h random-constant
/// gyro bias, 0.05 m/s/√h velocity random walk, a 0.5 mg Gauss–Markov accelerometer bias of
/// 10 minutes.
#[must_use]
pub fn tactical_imu() -> ImuErrorModel {
    ImuErrorModel {
        gyro: SensorErrorModel {
            noise_density: Vector3::repeat(0.1_f64.to_radians() / 60.0),
            markov_sigma: Vector3::repeat(1.0_f64.to_radians() / 3600.0),
            ..SensorErrorModel::default()
        },
        accelerometer: SensorErrorModel {
            noise_density: Vector3::repeat(0.05 / 60.0),
            markov_sigma: Vector3::repeat(5e-3),
            markov_time: Vector3::repeat(600.0),
            ..SensorErrorModel::default()
        },
    }
}

/// The initial 1σ of the navigation states (rad, rad, m; m/s; rad), at the trajectory's
/// start.
#[must_use]
pub fn initial_sigma(start: &Geodetic) -> [f64; 9] {
    let r = 6.378e6;
    [3.0 / r, 3.0 / (r * start.latitude.cos()), 3.0, 0.1, 0.1, 0.1, 1e-3, 1e-3, 5e-3]
}

/// The initial covariance: [`initial_sigma`] and the bias variances of `imu`.
#[must_use]
pub fn initial_covariance(start: &Geodetic, imu: &ImuErrorModel) -> SMatrix<f64, 15, 15> {
    let mut p = rotaframe::linearise::inertial::bias_covariance::<15>(imu);
    for (i, s) in initial_sigma(start).iter().enumerate() {
        p[(i, i)] = s * s;
    }
    p
}

/// The trajectory, its ideal increments and the truth at every IMU time.
#[allow(missing_debug_implementations)]
pub struct Flight {
    /// The trajectory.
    pub trajectory: Manoeuvres,
    /// Ideal increments at [`RATE`].
    pub increments: Vec<ImuIncrement>,
    /// True states at the IMU times (one more than the increments).
    pub truth: Vec<NavState>,
}

impl Flight {
    /// The standard manoeuvring flight over [`DURATION`].
    #[must_use]
    pub fn standard() -> Self {
        let trajectory = Manoeuvres::standard(WGS84);
        let times: Vec<f64> = (0..=(DURATION * RATE) as usize).map(|k| k as f64 / RATE).collect();
        let increments = imu_increments(&WGS84, GravityModel::Normal, |t| trajectory.relative_to_inertial(t), &times)
            .collect::<Result<Vec<_>, _>>()
            .unwrap();
        let truth = times.iter().map(|&t| trajectory.truth(t).unwrap()).collect();
        Self { trajectory, increments, truth }
    }

    /// The antenna's true geodetic position and NED velocity at time `t`.
    #[must_use]
    pub fn antenna(&self, t: f64) -> (Geodetic, Vector3<f64>) {
        let body = self.trajectory.relative_to_earth(t).unwrap();
        let arm = PointKinematics::new(Vector3::from(LEVER_ARM), Vector3::zeros(), Vector3::zeros());
        let point = body.map_point(&arm);
        let position = ecef_to_geodetic(&WGS84, &point.position).unwrap();
        let c_en = ned_from_ecef(position.latitude, position.longitude).unwrap();
        (position, c_en * point.velocity)
    }
}

/// A standard normal draw (Box–Muller on [`Seeded`]).
pub fn normal(rng: &mut Seeded) -> f64 {
    let u = rng.next_unit().max(1e-300);
    let v = rng.next_unit();
    (-2.0 * u.ln()).sqrt() * (std::f64::consts::TAU * v).cos()
}

/// The navigation error (estimate minus truth) in the 15-state order's first nine states.
#[must_use]
pub fn nav_error(estimate: &NavState, truth: &NavState) -> SVector<f64, 9> {
    let psi = (estimate.attitude * truth.attitude.inverse()).scaled_axis();
    let dv = estimate.velocity_ned - truth.velocity_ned;
    let (a, b) = (&estimate.position, &truth.position);
    SVector::<f64, 9>::from_column_slice(&[
        a.latitude - b.latitude,
        a.longitude - b.longitude,
        a.height - b.height,
        dv.x,
        dv.y,
        dv.z,
        psi.x,
        psi.y,
        psi.z,
    ])
}

/// What one run measured: the NEES of the nine navigation states after each GNSS epoch's
/// updates, and the NIS of every accepted position and velocity innovation.
#[derive(Debug, Default, Clone)]
pub struct RunStatistics {
    /// NEES per GNSS epoch.
    pub nees: Vec<f64>,
    /// NIS of accepted position fixes.
    pub position_nis: Vec<f64>,
    /// NIS of accepted velocity fixes.
    pub velocity_nis: Vec<f64>,
    /// Rejected measurements.
    pub rejected: usize,
}

/// One seeded run: the filter with `filter_imu` as its process noise flies the flight with
/// sensors corrupted by [`tactical_imu`] (the initial covariance is always that of the true
/// sensors: a change of `filter_imu` changes only `Q`).
#[must_use]
pub fn run_once(flight: &Flight, seed: u64, filter_imu: &ImuErrorModel) -> RunStatistics {
    let truth_imu = tactical_imu();
    let mut sensors = ImuErrorGenerator::new(truth_imu, 0xa1d_0000 + seed).unwrap();
    let mut rng = Seeded(0x9a55_0000 + seed);
    let start = flight.truth[0];
    let sigma = initial_sigma(&start.position);
    let d: Vec<f64> = sigma.iter().map(|s| s * normal(&mut rng)).collect();
    let psi = Vector3::new(d[6], d[7], d[8]);
    let initial = NavState::new(
        Geodetic {
            latitude: start.position.latitude + d[0],
            longitude: start.position.longitude + d[1],
            height: start.position.height + d[2],
        },
        start.velocity_ned + Vector3::new(d[3], d[4], d[5]),
        UnitQuaternion::from_scaled_axis(psi) * start.attitude,
    );
    let ins = Strapdown::new(StrapdownConfig::default(), &initial).unwrap();
    let p0 = initial_covariance(&start.position, &truth_imu);
    let mut filter = AidedFilter::<15>::new(ins, filter_imu, &p0, FilterSettings::default()).unwrap();
    let mut stats = RunStatistics::default();
    let every = RATE as usize;
    for (k, increment) in flight.increments.iter().enumerate() {
        filter.predict(&sensors.corrupt(increment).unwrap()).unwrap();
        if (k + 1) % every != 0 {
            continue;
        }
        let t = (k + 1) as f64 / RATE;
        let (antenna, velocity) = flight.antenna(t);
        let radii = rotaframe::earth::radii_of_curvature(&WGS84, antenna.latitude).unwrap();
        let noise = Vector3::from_fn(|i, _| POSITION_SIGMA[i] * normal(&mut rng));
        let measured = Geodetic {
            latitude: antenna.latitude + noise.x / (radii.meridian + antenna.height),
            longitude: antenna.longitude + noise.y / ((radii.prime_vertical + antenna.height) * antenna.latitude.cos()),
            height: antenna.height - noise.z,
        };
        let fix = Measurement::Position {
            position: measured,
            sigma_ned: Vector3::from(POSITION_SIGMA),
            lever_arm: Vector3::from(LEVER_ARM),
        };
        let report = filter.update(&fix).unwrap();
        if report.accepted {
            stats.position_nis.push(report.nis);
        } else {
            stats.rejected += 1;
        }
        let v_noise = Vector3::from_fn(|_, _| VELOCITY_SIGMA * normal(&mut rng));
        let fix = Measurement::Velocity {
            velocity_ned: velocity + v_noise,
            sigma_ned: Vector3::repeat(VELOCITY_SIGMA),
            lever_arm: Vector3::from(LEVER_ARM),
        };
        let report = filter.update(&fix).unwrap();
        if report.accepted {
            stats.velocity_nis.push(report.nis);
        } else {
            stats.rejected += 1;
        }
        let error = nav_error(&filter.state(), &flight.truth[k + 1]);
        let p = filter.covariance().fixed_view::<9, 9>(0, 0).into_owned();
        let nees = error.dot(&(p.try_inverse().unwrap() * error));
        stats.nees.push(nees);
    }
    stats
}

/// Runs seeds `0..runs` on two threads.
#[must_use]
pub fn monte_carlo(flight: &Flight, runs: u64, filter_imu: &ImuErrorModel) -> Vec<RunStatistics> {
    let half = runs / 2;
    std::thread::scope(|scope| {
        let a = scope.spawn(|| (0..half).map(|s| run_once(flight, s, filter_imu)).collect::<Vec<_>>());
        let b: Vec<_> = (half..runs).map(|s| run_once(flight, s, filter_imu)).collect();
        let mut all = a.join().unwrap();
        all.extend(b);
        all
    })
}

/// The `p` quantile of χ²(k), by bisection on [`chi_square_cdf`] (for the bands of the
/// tests).
#[must_use]
pub fn chi_square_inverse(p: f64, k: f64) -> f64 {
    let (mut lo, mut hi) = (0.0, 10.0 * k + 100.0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if chi_square_cdf(mid, k) < p { lo = mid } else { hi = mid }
    }
    hi
}

/// The chi-square distribution function with `k` degrees of freedom by the regularised lower
/// incomplete gamma function (its series; A&S 6.5.29), for the bands of the tests.
#[must_use]
pub fn chi_square_cdf(x: f64, k: f64) -> f64 {
    let (a, z) = (0.5 * k, 0.5 * x);
    if z <= 0.0 {
        return 0.0;
    }
    let mut term = 1.0 / a;
    let mut sum = term;
    for n in 1..2000 {
        term *= z / (a + f64::from(n));
        sum += term;
        if term < sum * 1e-17 {
            break;
        }
    }
    (sum.ln() + a * z.ln() - z - ln_gamma(a)).exp()
}

/// `ln Γ(a)` for `a` a positive multiple of ½ (exact recurrences).
fn ln_gamma(a: f64) -> f64 {
    let mut x = a;
    let mut acc = 0.0;
    while x > 1.0 {
        x -= 1.0;
        acc += x.ln();
    }
    if (x - 0.5).abs() < 1e-12 { acc + 0.5 * std::f64::consts::PI.ln() } else { acc }
}

/// The mean and variance of a chi-square of `k` degrees of freedom truncated at `gate`
/// (`P(χ² ≤ gate)` of the mass kept), by Simpson's rule on its density.
#[must_use]
pub fn truncated_chi_square_moments(k: f64, gate: f64) -> (f64, f64) {
    let density = |x: f64| {
        if x <= 0.0 { 0.0 } else { ((0.5 * k - 1.0) * x.ln() - 0.5 * x - 0.5 * k * 2f64.ln() - ln_gamma(0.5 * k)).exp() }
    };
    let n = 20_000;
    let h = gate / n as f64;
    let (mut m0, mut m1, mut m2) = (0.0, 0.0, 0.0);
    for i in 0..=n {
        let x = i as f64 * h;
        let w = if i == 0 || i == n {
            1.0
        } else if i % 2 == 1 {
            4.0
        } else {
            2.0
        };
        let f = density(x.max(1e-300)) * w;
        m0 += f;
        m1 += f * x;
        m2 += f * x * x;
    }
    let mean = m1 / m0;
    (mean, m2 / m0 - mean * mean)
}

/// One run of the navigator over the flight, filtered and smoothed, with GNSS missing over
/// `outage` (start, end in s).
#[derive(Debug, Clone)]
pub struct SmoothedRun {
    /// Filtered navigation error (nine states) at every IMU time.
    pub filtered_error: Vec<SVector<f64, 9>>,
    /// Filtered 1σ of all 15 states at every IMU time.
    pub filtered_sigma: Vec<[f64; 15]>,
    /// Smoothed navigation error at every IMU time.
    pub smoothed_error: Vec<SVector<f64, 9>>,
    /// Smoothed 1σ at every IMU time.
    pub smoothed_sigma: Vec<[f64; 15]>,
    /// IMU index of every accepted GNSS epoch, with the smoothed covariance of the nine
    /// navigation states there.
    pub epochs: Vec<(usize, SMatrix<f64, 9, 9>)>,
    /// The run's traces (with [`Switches::trace`]).
    pub traces: Vec<Trace>,
}

/// Records the filtered solution and the smoother's log at once.
struct Recorder {
    log: rotaframe::aided::SmootherLog,
    filtered: Vec<(NavState, [f64; 15])>,
    epochs: Vec<usize>,
    traces: Option<Vec<Trace>>,
}

impl rotaframe::aided::RunSink for Recorder {
    const TRACES: bool = true;
    fn propagated(
        &mut self,
        start: &rotaframe::nav::MechanizationState,
        interval: f64,
        navigator: &rotaframe::aided::AidedNavigator,
    ) {
        self.log.propagated(start, interval, navigator);
        if let Some(traces) = &mut self.traces {
            let (config, _, _) = navigator.strapdown().parts();
            let (rate, force) = navigator.last_rates();
            let imu = navigator.imu();
            let times = (&imu.accelerometer.markov_time, &imu.gyro.markov_time);
            let (f, g) = rotaframe::linearise::inertial::error_model::<15>(&config, start, &force, &rate, times).unwrap();
            traces.push(Trace::Step(Box::new((f, g, interval))));
        }
    }
    fn updated(&mut self, gain: &rotaframe::aided::GainTrace<'_>, covariance: &[f64]) {
        self.log.updated(gain, covariance);
        if let Some(traces) = &mut self.traces {
            let g = rotaframe::aided::Gain::<15> {
                rows: gain.rows,
                jacobian: SMatrix::from_column_slice(gain.jacobian),
                s_inverse: *gain.s_inverse,
                innovation: *gain.innovation,
                gain: SMatrix::from_column_slice(gain.gain),
                noise_variance: *gain.noise_variance,
            };
            traces.push(Trace::Update(Box::new(g), usize::MAX));
        }
    }
    fn step(&mut self, index: usize, navigator: &rotaframe::aided::AidedNavigator) {
        self.log.step(index, navigator);
        if let Some(traces) = &mut self.traces {
            let mut p = SMatrix::<f64, 15, 15>::zeros();
            navigator.write_covariance(p.as_mut_slice()).unwrap();
            traces.push(Trace::Output(Box::new(p)));
        }
        let mut sigma = [0.0; 15];
        navigator.write_sigma(&mut sigma).unwrap();
        self.filtered.push((navigator.state(), sigma));
    }
    fn measurement(&mut self, set: usize, index: usize, report: &rotaframe::aided::UpdateReport) {
        self.log.measurement(set, index, report);
        if report.accepted
            && let Some(Trace::Update(_, s)) = self.traces.as_mut().and_then(|t| t.last_mut())
        {
            *s = set;
        }
    }
    fn epoch(&mut self, time: f64, navigator: &rotaframe::aided::AidedNavigator, accepted: bool) {
        self.log.epoch(time, navigator, accepted);
        if accepted {
            self.epochs.push(self.filtered.len());
        }
    }
}

/// The smoothed points and epoch covariances, by index.
struct Smoothed {
    points: Vec<(NavState, [f64; 15])>,
    epochs: Vec<SMatrix<f64, 9, 9>>,
}

impl rotaframe::aided::SmoothedSink for Smoothed {
    fn point(&mut self, index: usize, point: &rotaframe::aided::SmoothedPoint<'_>) {
        let mut sigma = [0.0; 15];
        sigma.copy_from_slice(point.sigma);
        self.points[index] = (point.state, sigma);
    }
    fn epoch(&mut self, index: usize, covariance: &[f64]) {
        self.epochs[index] = SMatrix::<f64, 15, 15>::from_column_slice(covariance).fixed_view::<9, 9>(0, 0).into_owned();
    }
}

/// One seeded run of [`run_once`]'s fixes, sensors corrupted by `imu` (also the filter's
/// model), through [`rotaframe::aided::AidedNavigator::run`]
/// with the smoother's log, GNSS absent over `outage`.
#[must_use]
pub fn smoothed_run(flight: &Flight, imu: &ImuErrorModel, seed: u64, outage: Option<(f64, f64)>) -> SmoothedRun {
    smoothed_run_with(flight, imu, seed, outage, &Switches::all(imu)).0
}

/// Which sources of error a [`smoothed_run_with`] draws (the filter's model stays the same):
/// the sensors' errors, the initial error of each of the nine navigation states, the noise
/// of the position and of the velocity fixes.
#[derive(Debug, Clone, Copy)]
pub struct Switches {
    /// The error model the sensors are corrupted with.
    pub sensors: ImuErrorModel,
    /// Whether each navigation state starts with its error.
    pub initial: [bool; 9],
    /// Whether the position fixes are noisy.
    pub position_noise: bool,
    /// Whether the velocity fixes are noisy.
    pub velocity_noise: bool,
    /// The length of the run (s, at most [`DURATION`]).
    pub duration: f64,
    /// Whether the run records its [`Trace`]s.
    pub trace: bool,
}

/// What a run did, in order, for tests that redo its linear algebra: each covariance
/// propagation with the filter's `F`, `G` and interval, each accepted update with its gain
/// and set, each IMU time with the filter's covariance there.
#[derive(Debug, Clone)]
pub enum Trace {
    /// A propagation.
    Step(Box<(SMatrix<f64, 15, 15>, rotaframe::linearise::inertial::NoiseInput<15>, f64)>),
    /// An accepted update of set `.1`.
    Update(Box<rotaframe::aided::Gain<15>>, usize),
    /// An IMU time, with the filter's covariance.
    Output(Box<SMatrix<f64, 15, 15>>),
}

impl Switches {
    /// Every source on, the sensors corrupted with `imu`.
    #[must_use]
    pub fn all(imu: &ImuErrorModel) -> Self {
        Self { sensors: *imu, initial: [true; 9], position_noise: true, velocity_noise: true, duration: DURATION, trace: false }
    }

    /// Every source off (perfect sensors and fixes, exact start).
    #[must_use]
    pub fn none() -> Self {
        Self {
            sensors: ImuErrorModel::default(),
            initial: [false; 9],
            position_noise: false,
            velocity_noise: false,
            duration: DURATION,
            trace: false,
        }
    }
}

/// [`smoothed_run`] with only the sources of `switches` drawn (the same draws, so the same
/// seed gives the same realisation of each source), also returning the smoother's log.
#[must_use]
pub fn smoothed_run_with(
    flight: &Flight,
    imu: &ImuErrorModel,
    seed: u64,
    outage: Option<(f64, f64)>,
    switches: &Switches,
) -> (SmoothedRun, rotaframe::aided::SmootherLog) {
    use rotaframe::aided::{AidedNavigator, MeasurementSet, MeasurementSlices};
    let imu = *imu;
    let mut sensors = ImuErrorGenerator::new(switches.sensors, 0xa1d_0000 + seed).unwrap();
    let mut rng = Seeded(0x9a55_0000 + seed);
    let start = flight.truth[0];
    let sigma = initial_sigma(&start.position);
    let d: Vec<f64> =
        sigma.iter().zip(&switches.initial).map(|(s, &on)| s * normal(&mut rng) * f64::from(u8::from(on))).collect();
    let initial = NavState::new(
        Geodetic {
            latitude: start.position.latitude + d[0],
            longitude: start.position.longitude + d[1],
            height: start.position.height + d[2],
        },
        start.velocity_ned + Vector3::new(d[3], d[4], d[5]),
        UnitQuaternion::from_scaled_axis(Vector3::new(d[6], d[7], d[8])) * start.attitude,
    );
    let ins = Strapdown::new(StrapdownConfig::default(), &initial).unwrap();
    let p0 = initial_covariance(&start.position, &imu);
    let mut nav = AidedNavigator::new(ins, &imu, p0.as_slice(), 15, FilterSettings::default()).unwrap();
    let steps = ((switches.duration.min(DURATION) * RATE).round() as usize).min(flight.increments.len());
    let times: Vec<f64> = (0..=steps).map(|k| k as f64 / RATE).collect();
    let (mut dtheta, mut dv) = (Vec::new(), Vec::new());
    for increment in &flight.increments[..steps] {
        let m = sensors.corrupt(increment).unwrap();
        dtheta.push([m.delta_angle.x, m.delta_angle.y, m.delta_angle.z]);
        dv.push([m.delta_velocity.x, m.delta_velocity.y, m.delta_velocity.z]);
    }
    let (mut fix_times, mut positions, mut velocities) = (Vec::new(), Vec::new(), Vec::new());
    for second in 1..=(steps / RATE as usize) {
        let t = second as f64;
        let (antenna, velocity) = flight.antenna(t);
        let radii = rotaframe::earth::radii_of_curvature(&WGS84, antenna.latitude).unwrap();
        let (on_p, on_v) = (f64::from(u8::from(switches.position_noise)), f64::from(u8::from(switches.velocity_noise)));
        let noise = Vector3::from_fn(|i, _| POSITION_SIGMA[i] * normal(&mut rng) * on_p);
        let v_noise = Vector3::from_fn(|_, _| VELOCITY_SIGMA * normal(&mut rng) * on_v);
        if outage.is_some_and(|(a, b)| t > a && t < b) {
            continue;
        }
        fix_times.push(t);
        positions.push(Measurement::Position {
            position: Geodetic {
                latitude: antenna.latitude + noise.x / (radii.meridian + antenna.height),
                longitude: antenna.longitude + noise.y / ((radii.prime_vertical + antenna.height) * antenna.latitude.cos()),
                height: antenna.height - noise.z,
            },
            sigma_ned: Vector3::from(POSITION_SIGMA),
            lever_arm: Vector3::from(LEVER_ARM),
        });
        velocities.push(Measurement::Velocity {
            velocity_ned: velocity + v_noise,
            sigma_ned: Vector3::repeat(VELOCITY_SIGMA),
            lever_arm: Vector3::from(LEVER_ARM),
        });
    }
    let position_set = MeasurementSlices { times: &fix_times, measurements: &positions };
    let velocity_set = MeasurementSlices { times: &fix_times, measurements: &velocities };
    let sets: [&dyn MeasurementSet; 2] = [&position_set, &velocity_set];
    let mut recorder = Recorder {
        log: rotaframe::aided::SmootherLog::new(&nav).unwrap(),
        filtered: Vec::with_capacity(times.len()),
        epochs: Vec::new(),
        traces: switches.trace.then(Vec::new),
    };
    nav.run(&times, &dtheta, &dv, &sets, &mut recorder).unwrap();
    let mut smoothed =
        Smoothed { points: vec![(initial, [0.0; 15]); times.len()], epochs: vec![SMatrix::zeros(); recorder.epochs.len()] };
    recorder.log.smooth(&mut smoothed).unwrap();
    let errors = |states: &[(NavState, [f64; 15])]| -> Vec<SVector<f64, 9>> {
        states.iter().zip(&flight.truth).map(|((s, _), truth)| nav_error(s, truth)).collect()
    };
    let run = SmoothedRun {
        filtered_error: errors(&recorder.filtered),
        filtered_sigma: recorder.filtered.iter().map(|(_, s)| *s).collect(),
        smoothed_error: errors(&smoothed.points),
        smoothed_sigma: smoothed.points.iter().map(|(_, s)| *s).collect(),
        epochs: recorder.epochs.iter().copied().zip(smoothed.epochs).collect(),
        traces: recorder.traces.unwrap_or_default(),
    };
    (run, recorder.log)
}
