//! Strapdown navigation checks: stationary IMU output, a one-hour stationary run, the Schuler
//! oscillation, closure on a dynamic trajectory for both mechanizations at 100 Hz and
//! 400 Hz, their agreement, varying rates, the poles and the vertical channel.
//!
//! Run with `--nocapture` to see the error-versus-time tables.

use core::f64::consts::{FRAC_PI_2, PI};

use approx::assert_relative_eq;
use rotaframe::earth::{
    Geodetic, GravityModel, WGS84, earth_motion, earth_rate_ned, gravity_ecef, gravity_ned, local_level_motion, ned_from_ecef,
    normal_gravity_at_height, radii_of_curvature,
};
use rotaframe::frames::{Body, Ned};
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::{
    ImuIncrement, MechanizationState, NavFrame, NavState, Strapdown, StrapdownConfig, VerticalChannel, ideal_imu, imu_increment,
    imu_increments,
};
use rotaframe::rotation::EulerZyx;
use rotaframe::{BatchError, Error};
use rotaframe_tests::trajectories::{Manoeuvres, state_errors};

/// A body at rest on the Earth with a fixed attitude relative to NED.
fn parked(
    here: &Geodetic,
    attitude: UnitQuaternion<f64>,
) -> impl Fn(f64) -> rotaframe::Result<FrameMotion<rotaframe::frames::Eci, Body>> {
    let ned = local_level_motion(&WGS84, here, &Vector3::zeros(), &Vector3::zeros()).unwrap();
    let body = FrameMotion::<Ned, Body>::from_rotation(attitude).unwrap();
    move |t| Ok(earth_motion(&WGS84, t, 0.25)?.then(&ned).then(&body))
}

fn site_45() -> (Geodetic, UnitQuaternion<f64>) {
    (Geodetic::from_degrees(45.0, 11.0, 120.0), EulerZyx::from_degrees(30.0, 2.0, -1.0).to_quaternion())
}

#[test]
fn stationary_imu_at_45_degrees_reads_earth_rate_and_minus_plumb_line_gravity() {
    // Reference: a stationary strapdown IMU senses ω_ie^n = Ω (cos φ, 0, −sin φ) and the
    // specific force −g^n (Groves 2013, §5.5; Titterton and Weston 2004, ch. 3; common
    // practice). Level, north-aligned body first, then a tilted one (rotated by C_n^b).
    // Tolerance: 1e-15 rad/s on rates of 7e-5 (a few ulps after three compositions);
    // 1e-13 m/s² on forces of 9.8 (the ECI position's rounding, 1e-9 m in 6.4e6 m, scaled by g).
    let here = Geodetic::from_degrees(45.0, 11.0, 120.0);
    let omega = WGS84.rotation_rate();
    let phi = here.latitude;
    let level = parked(&here, UnitQuaternion::identity())(3600.0).unwrap();
    let imu = ideal_imu(&WGS84, GravityModel::Normal, &level).unwrap();
    assert_relative_eq!(imu.angular_rate, Vector3::new(omega * phi.cos(), 0.0, -omega * phi.sin()), epsilon = 1e-15);
    let g = gravity_ned(&WGS84, phi, here.height).unwrap();
    assert_relative_eq!(imu.specific_force, -g, epsilon = 1e-13);
    assert_relative_eq!(imu.specific_force.z, -normal_gravity_at_height(&WGS84, phi, here.height).unwrap(), epsilon = 1e-13);

    let attitude = site_45().1;
    let tilted = ideal_imu(&WGS84, GravityModel::Normal, &parked(&here, attitude)(10.0).unwrap()).unwrap();
    assert_relative_eq!(tilted.angular_rate, attitude.inverse() * earth_rate_ned(&WGS84, phi).unwrap(), epsilon = 1e-15);
    assert_relative_eq!(tilted.specific_force, attitude.inverse() * -g, epsilon = 1e-13);
}

#[test]
fn stationary_imu_with_j2_gravity_reads_minus_j2_gravity() {
    // Reference: the same statement for the J2 field, f = −g with g = gravity_ecef resolved in
    // NED (its small north component included). Tolerance as above.
    let here = Geodetic::from_degrees(-33.9, 18.4, 1000.0);
    let imu = ideal_imu(&WGS84, GravityModel::J2, &parked(&here, UnitQuaternion::identity())(50.0).unwrap()).unwrap();
    let r = rotaframe::earth::geodetic_to_ecef(&WGS84, &here).unwrap();
    let g = ned_from_ecef(here.latitude, here.longitude).unwrap() * gravity_ecef(&WGS84, &r).unwrap();
    assert_relative_eq!(imu.specific_force, -g, epsilon = 1e-13);
    assert!(g.x.abs() > 1e-6, "the J2 field has a north component off the ellipsoid");
}

fn stationary_run(frame: NavFrame) -> (f64, f64, f64) {
    let (here, attitude) = site_45();
    let rate = 100.0;
    let times: Vec<f64> = (0..=360_000).map(|k| f64::from(k) / rate).collect();
    let traj = parked(&here, attitude);
    let start = NavState::new(here, Vector3::zeros(), attitude);
    let mut ins = Strapdown::new(StrapdownConfig { frame, ..StrapdownConfig::default() }, &start).unwrap();
    let (mut worst_p, mut worst_v, mut worst_a) = (0.0_f64, 0.0_f64, 0.0_f64);
    for inc in imu_increments(&WGS84, GravityModel::Normal, traj, &times) {
        ins.step(&inc.unwrap()).unwrap();
        let (p, v, a) = state_errors(&WGS84, &ins.state(), &start);
        worst_p = worst_p.max(p);
        worst_v = worst_v.max(v);
        worst_a = worst_a.max(a);
    }
    assert_relative_eq!(ins.elapsed(), 3600.0, max_relative = 1e-12);
    (worst_p, worst_v, worst_a)
}

#[test]
fn ned_mechanization_fed_one_hour_of_stationary_data_stays_put() {
    // Requirement: fed ideal stationary data for one hour at 100 Hz, position drift ≤ 1 mm and
    // velocity ≤ 1 µm/s (the figures; a stationary IMU's ideal output is the Earth rate
    // and −g, common practice). Free vertical channel, tilted and yawed body.
    let (p, v, a) = stationary_run(NavFrame::Ned);
    eprintln!("NED stationary 1 h @ 100 Hz: max position drift {p:.2e} m, velocity {v:.2e} m/s, attitude {a:.2e} rad");
    assert!(p <= 1e-3 && v <= 1e-6, "drift {p} m, {v} m/s");
    assert!(a <= 1e-9, "attitude drift {a} rad");
}

#[test]
fn ecef_mechanization_fed_one_hour_of_stationary_data_stays_put() {
    // As above for the Earth-fixed form.
    let (p, v, a) = stationary_run(NavFrame::Ecef);
    eprintln!("ECEF stationary 1 h @ 100 Hz: max position drift {p:.2e} m, velocity {v:.2e} m/s, attitude {a:.2e} rad");
    assert!(p <= 1e-3 && v <= 1e-6, "drift {p} m, {v} m/s");
    assert!(a <= 1e-9, "attitude drift {a} rad");
}

/// Times at which `values` (sampled every `dt`) cross zero, by linear interpolation.
fn zero_crossings(values: &[f64], dt: f64) -> Vec<f64> {
    values
        .windows(2)
        .enumerate()
        .filter(|(_, w)| w[0].signum() != w[1].signum())
        .map(|(k, w)| (k as f64 + w[0] / (w[0] - w[1])) * dt)
        .collect()
}

/// Free-inertial run from stationary ideal data at `here` with a north velocity error of
/// 0.1 m/s, height held, for four hours at 20 Hz. Returns, every step, the horizontal position
/// error `(north, east)` in metres.
fn schuler_run(frame: NavFrame, here: &Geodetic, dt: f64) -> Vec<(f64, f64)> {
    let attitude = EulerZyx::from_degrees(30.0, 2.0, -1.0).to_quaternion();
    // A stationary body's ideal outputs are constant in body axes: one interval serves all.
    let inc = imu_increment(&WGS84, GravityModel::Normal, &mut parked(here, attitude), 0.0, dt).unwrap();
    let start = NavState::new(*here, Vector3::new(0.1, 0.0, 0.0), attitude);
    let cfg = StrapdownConfig { frame, vertical: VerticalChannel::Hold, ..StrapdownConfig::default() };
    let mut ins = Strapdown::new(cfg, &start).unwrap();
    let radii = radii_of_curvature(&WGS84, here.latitude).unwrap();
    let steps = (4.0 * 3600.0 / dt) as usize;
    (0..steps)
        .map(|_| {
            ins.step(&inc).unwrap();
            let s = ins.state();
            assert!((s.position.height - here.height).abs() < 1e-6, "height held");
            let north = (s.position.latitude - here.latitude) * (radii.meridian + here.height);
            let east = (s.position.longitude - here.longitude) * (radii.prime_vertical + here.height) * here.latitude.cos();
            (north, east)
        })
        .collect()
}

/// Twice the mean spacing of the zero crossings.
fn period_from_crossings(crossings: &[f64]) -> f64 {
    assert!(crossings.len() >= 5, "{} crossings", crossings.len());
    2.0 * (crossings[crossings.len() - 1] - crossings[0]) / (crossings.len() - 1) as f64
}

#[test]
fn schuler_oscillation_with_height_held_has_period_two_pi_root_r_over_g() {
    // Reference: an initial horizontal velocity error in a free inertial system oscillates
    // with the Schuler period 2π√(R/g) ≈ 84.4 min (M. Schuler, Physikalische Zeitschrift 24
    // (1923) 344–350; Titterton and Weston 2004, §12.3; common practice). Requirement: within
    // 0.5%. Stationary ideal data, 0.1 m/s north velocity error, height held, four hours.
    //
    // On the equator the north channel is a pure Schuler loop on the meridian radius,
    // R = M + h: the period must match to 1e-6 (rounding in the zero-crossing interpolation).
    // At 45° the vertical Earth rate Ω_f = Ω sin φ makes the oscillation plane turn (Foucault):
    // the error z = x_N + i x_E obeys z̈ − 2iΩ_f ż + ω_s² z = 0, so z e^{−iΩ_f t} oscillates at
    // √(ω_s² + Ω_f²) (Titterton and Weston 2004, §12.3.2). Its zero crossings give the period,
    // which must lie within 0.5% of 2π√(R/g) (R = √(MN) + h, the Gaussian mean radius) and
    // within 0.2% of the Foucault-shifted value (the remaining difference: the north and east
    // loops have radii M and N, 0.34% apart at 45°).
    let g_at = |here: &Geodetic| normal_gravity_at_height(&WGS84, here.latitude, here.height).unwrap();
    let dt = 0.05;
    for frame in [NavFrame::Ned, NavFrame::Ecef] {
        let equator = Geodetic::from_degrees(0.0, 11.0, 120.0);
        let errors = schuler_run(frame, &equator, dt);
        let north: Vec<f64> = errors.iter().map(|e| e.0).collect();
        let measured = period_from_crossings(&zero_crossings(&north, dt));
        let radii = radii_of_curvature(&WGS84, 0.0).unwrap();
        let expected = 2.0 * PI * ((radii.meridian + equator.height) / g_at(&equator)).sqrt();
        eprintln!("{frame:?} equator: Schuler period {:.4} min, 2π√((M+h)/g) = {:.4} min", measured / 60.0, expected / 60.0);
        assert!((measured / expected - 1.0).abs() < 1e-6);
        assert!((measured / 60.0 / 84.4 - 1.0).abs() < 0.005);
        // Amplitude δv/ω_s (same references).
        let amplitude = north.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
        assert!((amplitude / (0.1 * expected / (2.0 * PI)) - 1.0).abs() < 1e-4, "amplitude {amplitude} m");

        let here = Geodetic::from_degrees(45.0, 11.0, 120.0);
        let foucault = WGS84.rotation_rate() * here.latitude.sin();
        let errors = schuler_run(frame, &here, dt);
        let turned: Vec<f64> = errors
            .iter()
            .enumerate()
            .map(|(k, (n, e))| {
                let (s, c) = (foucault * (k + 1) as f64 * dt).sin_cos();
                n * c + e * s
            })
            .collect();
        let measured = period_from_crossings(&zero_crossings(&turned, dt));
        let radii = radii_of_curvature(&WGS84, here.latitude).unwrap();
        let radius = (radii.meridian * radii.prime_vertical).sqrt() + here.height;
        let schuler = 2.0 * PI * (radius / g_at(&here)).sqrt();
        let shifted = 2.0 * PI / (g_at(&here) / radius + foucault * foucault).sqrt();
        eprintln!(
            "{frame:?} 45°: Schuler period {:.3} min; 2π√(R/g) = {:.3} min ({:+.3}%); with the Foucault shift {:.3} min ({:+.3}%)",
            measured / 60.0,
            schuler / 60.0,
            100.0 * (measured / schuler - 1.0),
            shifted / 60.0,
            100.0 * (measured / shifted - 1.0)
        );
        assert!((measured / schuler - 1.0).abs() < 0.005);
        assert!((measured / shifted - 1.0).abs() < 0.002);
        assert!((measured / 60.0 / 84.4 - 1.0).abs() < 0.005);
    }
}

/// Ideal increments of the manoeuvring trajectory at `rate` Hz for `duration` s.
fn manoeuvre_increments(traj: &Manoeuvres, times: &[f64]) -> Vec<ImuIncrement> {
    imu_increments(&WGS84, GravityModel::Normal, |t| traj.relative_to_inertial(t), times).collect::<Result<_, _>>().unwrap()
}

/// Runs `increments` from the truth at `times[0]` and returns (time, position, velocity,
/// attitude errors) once a minute, plus the largest of each over the run.
fn closure_errors(frame: NavFrame, traj: &Manoeuvres, times: &[f64], increments: &[ImuIncrement]) -> (Vec<[f64; 4]>, [f64; 3]) {
    let mut ins =
        Strapdown::new(StrapdownConfig { frame, ..StrapdownConfig::default() }, &traj.truth(times[0]).unwrap()).unwrap();
    let mut table = vec![];
    let mut worst = [0.0_f64; 3];
    let mut next_report = times[0] + 60.0;
    for (k, inc) in increments.iter().enumerate() {
        ins.step(inc).unwrap();
        let t = times[k + 1];
        if k % 10 == 0 || t >= next_report - 1e-9 {
            let (p, v, a) = state_errors(&WGS84, &ins.state(), &traj.truth(t).unwrap());
            worst = [worst[0].max(p), worst[1].max(v), worst[2].max(a)];
            if t >= next_report - 1e-9 {
                table.push([t, p, v, a]);
                next_report += 60.0;
            }
        }
    }
    (table, worst)
}

#[test]
fn closure_on_a_ten_minute_manoeuvre_is_small_for_both_mechanizations_at_100_and_400_hz() {
    // Closure (common practice for validating a mechanization): ideal increments of a known
    // trajectory — weaving at up to 13 m/s², climbing 300 m, rolling ±0.5 rad with 2 Hz
    // vibration — mechanized back from the true initial state with a free vertical channel.
    // Bounds: about 2× the largest errors over the run measured when the tests were written
    // (4.0 mm, 15 µm/s, 1.9e-8 rad at 100 Hz; 28 µm, 0.10 µm/s, 2.7e-10 rad at 400 Hz), so
    // that a change that degrades the algorithm fails. The 400 Hz errors must be at least 16× smaller: the
    // algorithm is at least second order in the interval.
    let traj = Manoeuvres::standard(WGS84);
    let mut worst_at = vec![];
    for (rate, bounds) in [(100.0, [8e-3, 3e-5, 4e-8]), (400.0, [6e-5, 2.5e-7, 6e-10])] {
        let n = (600.0 * rate) as usize;
        let times: Vec<f64> = (0..=n).map(|k| k as f64 / rate).collect();
        let increments = manoeuvre_increments(&traj, &times);
        for frame in [NavFrame::Ned, NavFrame::Ecef] {
            let (table, worst) = closure_errors(frame, &traj, &times, &increments);
            eprintln!("closure {frame:?} at {rate} Hz: time (s), position error (m), velocity error (m/s), attitude error (rad)");
            for [t, p, v, a] in &table {
                eprintln!("  {t:5.0}  {p:.3e}  {v:.3e}  {a:.3e}");
            }
            eprintln!("  worst over the run: {worst:?}");
            for (w, b) in worst.iter().zip(bounds) {
                assert!(w < &b, "{frame:?} {rate} Hz: worst {worst:?} above {bounds:?}");
            }
            worst_at.push(worst);
        }
    }
    for i in 0..2 {
        for q in 0..2 {
            assert!(worst_at[i + 2][q] * 16.0 < worst_at[i][q], "order of accuracy: {worst_at:?}");
        }
    }
}

#[test]
fn ned_and_ecef_mechanizations_agree_on_the_same_increments() {
    // The two forms integrate the same equations in different coordinates; on the same data
    // their states must agree far better than either's closure error. Bound: 1e-4 m, 1e-6 m/s
    // and 1e-10 rad after ten minutes at 100 Hz, where the closure errors are 4 mm, 14 µm/s and
    // 5e-9 rad (measured differences: see the printed line).
    let traj = Manoeuvres::standard(WGS84);
    let times: Vec<f64> = (0..=60_000).map(|k| f64::from(k) / 100.0).collect();
    let increments = manoeuvre_increments(&traj, &times);
    let start = traj.truth(0.0).unwrap();
    let mut ned = Strapdown::new(StrapdownConfig::default(), &start).unwrap();
    let mut ecef = Strapdown::new(StrapdownConfig { frame: NavFrame::Ecef, ..StrapdownConfig::default() }, &start).unwrap();
    let mut worst = [0.0_f64; 3];
    for inc in &increments {
        ned.step(inc).unwrap();
        ecef.step(inc).unwrap();
        let (p, v, a) = state_errors(&WGS84, &ned.state(), &ecef.state());
        worst = [worst[0].max(p), worst[1].max(v), worst[2].max(a)];
    }
    eprintln!(
        "NED vs ECEF over 10 min @ 100 Hz: position {:.2e} m, velocity {:.2e} m/s, attitude {:.2e} rad",
        worst[0], worst[1], worst[2]
    );
    assert!(worst[0] < 1e-4 && worst[1] < 1e-6 && worst[2] < 1e-10, "{worst:?}");
}

#[test]
fn closure_holds_at_a_varying_sample_rate() {
    // An IMU whose sample times jitter by ±30% around 100 Hz, over five minutes. Measured when
    // the test was written: 1.5 mm, 25 µm/s, 5.8e-8 rad; with the fixed-rate coefficient 1/12
    // in place of the unequal-interval one the same run gave 12 mm, 77 µm/s, 1.6e-7 rad.
    // Bounds: about 2× the measured errors.
    let traj = Manoeuvres::standard(WGS84);
    let mut rng = rotaframe_tests::Seeded(7);
    let mut times = vec![0.0];
    while *times.last().unwrap() < 300.0 {
        let t = times.last().unwrap() + 0.01 * (1.0 + 0.3 * rng.next_signed());
        times.push(t);
    }
    let increments = manoeuvre_increments(&traj, &times);
    for frame in [NavFrame::Ned, NavFrame::Ecef] {
        let (_, worst) = closure_errors(frame, &traj, &times, &increments);
        eprintln!(
            "varying rate {frame:?}, 5 min: worst position {:.2e} m, velocity {:.2e} m/s, attitude {:.2e} rad",
            worst[0], worst[1], worst[2]
        );
        assert!(worst[0] < 3e-3 && worst[1] < 5e-5 && worst[2] < 1.2e-7, "{worst:?}");
    }
}

#[test]
fn ecef_mechanization_navigates_across_the_north_pole_where_ned_refuses() {
    // The manoeuvre flown from 89.9° N heads north at 60 m/s and crosses the pole after about
    // three minutes. ECEF has no singularity (Groves 2013, §5.2); NED returns NearPole
    // (documented) and leaves its state unchanged. Bounds for ECEF over these five minutes:
    // about 2× the errors measured (1.0 mm, 7.9 µm/s, 1.8e-8 rad), the same as away from the
    // pole.
    let mut traj = Manoeuvres { origin: Geodetic::from_degrees(89.9, 30.0, 200.0), ..Manoeuvres::standard(WGS84) };
    // Shift the track in the tangent plane so that it meets the polar axis (x = y = 0) at
    // t = 180 s: the ECEF position is linear in the shift, so two probes solve for it.
    let at = |traj: &Manoeuvres| traj.relative_to_earth(180.0).unwrap().position();
    let base = at(&traj);
    let dn = at(&Manoeuvres { offset: Vector3::x(), ..traj }) - base;
    let de = at(&Manoeuvres { offset: Vector3::y(), ..traj }) - base;
    let det = dn.x * de.y - dn.y * de.x;
    traj.offset = Vector3::new((-base.x * de.y + base.y * de.x) / det, (-dn.x * base.y + dn.y * base.x) / det, 0.0);
    let times: Vec<f64> = (0..=30_000).map(|k| f64::from(k) / 100.0).collect();
    let increments = manoeuvre_increments(&traj, &times);
    let mut ecef =
        Strapdown::new(StrapdownConfig { frame: NavFrame::Ecef, ..StrapdownConfig::default() }, &traj.truth(0.0).unwrap())
            .unwrap();
    let mut ned = Strapdown::new(StrapdownConfig::default(), &traj.truth(0.0).unwrap()).unwrap();
    let mut ned_failed_at = None;
    let mut nearest_pole = FRAC_PI_2;
    let mut worst = [0.0_f64; 3];
    for (k, inc) in increments.iter().enumerate() {
        ecef.step(inc).unwrap();
        let truth = traj.relative_to_earth(times[k + 1]).unwrap();
        let (_, MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef }, _) = ecef.parts() else {
            unreachable!()
        };
        let e = [
            (position_ecef - truth.position()).norm(),
            (velocity_ecef - truth.velocity()).norm(),
            attitude_ecef.angle_to(&truth.rotation()),
        ];
        worst = [worst[0].max(e[0]), worst[1].max(e[1]), worst[2].max(e[2])];
        nearest_pole = nearest_pole.min(FRAC_PI_2 - ecef.state().position.latitude);
        if ned_failed_at.is_none() {
            let before = ned;
            if let Err(e) = ned.step(inc) {
                assert!(matches!(e, Error::NearPole { quantity: "latitude", .. }), "{e}");
                assert_eq!(ned, before, "state unchanged on error");
                ned_failed_at = Some(times[k]);
            }
        }
    }
    eprintln!(
        "over the pole: closest approach {:.3e} m, NED refused at t = {:?} s; ECEF worst errors {worst:?}",
        nearest_pole * 6.4e6,
        ned_failed_at
    );
    assert!(worst[0] < 2e-3 && worst[1] < 1.6e-5 && worst[2] < 4e-8, "{worst:?}");
    assert!(nearest_pole < 100.0 / 6.4e6, "the track passes within 100 m of the pole");
    assert!(ned_failed_at.is_some());
}

#[test]
fn vertical_channel_free_diverges_hold_holds_and_aided_converges() {
    // Reference: the free inertial vertical channel is unstable with time constant √(R/2g)
    // ≈ 570 s (Titterton and Weston 2004, §3.5; common practice); a second-order aiding loop
    // with k₁ = 2/τ, k₂ = 1/τ² pulls it to the reference. Stationary data, 10 m initial height
    // error, 30 minutes at 50 Hz.
    let (here, attitude) = site_45();
    let dt = 0.02;
    let inc = imu_increment(&WGS84, GravityModel::Normal, &mut parked(&here, attitude), 0.0, dt).unwrap();
    let wrong = NavState::new(Geodetic { height: here.height + 10.0, ..here }, Vector3::zeros(), attitude);
    let steps = (1800.0 / dt) as usize;
    let run = |vertical, frame| {
        let mut ins = Strapdown::new(StrapdownConfig { vertical, frame, ..StrapdownConfig::default() }, &wrong).unwrap();
        ins.set_height_reference(here.height).unwrap();
        for _ in 0..steps {
            ins.step(&inc).unwrap();
        }
        ins.state().position.height - here.height
    };
    for frame in [NavFrame::Ned, NavFrame::Ecef] {
        let free = run(VerticalChannel::Free, frame);
        let hold = run(VerticalChannel::Hold, frame);
        let aided = run(VerticalChannel::Aided { time_constant: 60.0 }, frame);
        eprintln!(
            "{frame:?}: height error after 30 min from 10 m: free {free:.1} m, hold {hold:.1e} m, aided (τ = 60 s) {aided:.1e} m"
        );
        // cosh(1800/570) ≈ 11.8: the free error grows (more than 8× here).
        assert!(free > 80.0, "free {free}");
        assert!(hold.abs() < 1e-6, "hold {hold}");
        // Critically damped: (1 + t/τ) e^{−t/τ} ≈ 3e-12 of the initial error after 30 τ.
        assert!(aided.abs() < 1e-3, "aided {aided}");
    }
}

#[test]
fn run_matches_stepping_and_writes_nothing_when_a_step_fails() {
    // The batch runner is the stepper in a loop; on failure (a NaN increment in the middle)
    // neither `out` nor the stepper changes.
    let traj = Manoeuvres::standard(WGS84);
    let times: Vec<f64> = (0..=500).map(|k| f64::from(k) / 100.0).collect();
    let increments = manoeuvre_increments(&traj, &times);
    let heights: Vec<f64> = times[1..].iter().map(|t| 350.0 + t).collect();
    for vertical in [VerticalChannel::Free, VerticalChannel::Aided { time_constant: 30.0 }] {
        let cfg = StrapdownConfig { vertical, ..StrapdownConfig::default() };
        let start = traj.truth(0.0).unwrap();
        let mut batch = Strapdown::new(cfg, &start).unwrap();
        let mut out = vec![NavState::default(); increments.len()];
        batch.run(&increments, Some(&heights), &mut out).unwrap();
        let mut single = Strapdown::new(cfg, &start).unwrap();
        for (k, inc) in increments.iter().enumerate() {
            single.set_height_reference(heights[k]).unwrap();
            single.step(inc).unwrap();
            assert_eq!(single.state(), out[k]);
        }
        assert_eq!(single, batch);

        let mut broken = increments.clone();
        broken[300].delta_velocity.y = f64::NAN;
        let before = batch;
        let mut out2 = vec![NavState::default(); increments.len()];
        let err = batch.run(&broken, None, &mut out2).unwrap_err();
        assert_eq!(err, BatchError { index: 300, error: Error::NonFinite { quantity: "delta_velocity" } });
        assert_eq!(batch, before);
        assert!(out2.iter().all(|s| *s == NavState::default()));
        let err = batch.run(&increments, None, &mut out2[..3]).unwrap_err();
        assert!(matches!(err.error, Error::LengthMismatch { quantity: "out", .. }));
    }
}

#[test]
fn stepper_rejects_bad_input_naming_it_and_stays_unchanged() {
    let (here, attitude) = site_45();
    let start = NavState::new(here, Vector3::zeros(), attitude);
    let mut ins = Strapdown::new(StrapdownConfig::default(), &start).unwrap();
    let before = ins;
    let good = ImuIncrement::new(Vector3::zeros(), Vector3::new(0.0, 0.0, -0.098), 0.01);
    for (bad, quantity) in [
        (ImuIncrement { interval: 0.0, ..good }, "interval"),
        (ImuIncrement { interval: -0.01, ..good }, "interval"),
        (ImuIncrement { interval: f64::INFINITY, ..good }, "interval"),
        (ImuIncrement { delta_angle: Vector3::new(f64::NAN, 0.0, 0.0), ..good }, "delta_angle"),
        (ImuIncrement { delta_velocity: Vector3::new(0.0, f64::INFINITY, 0.0), ..good }, "delta_velocity"),
    ] {
        assert_eq!(ins.step(&bad).unwrap_err().quantity(), quantity);
        assert_eq!(ins, before);
    }
    assert_eq!(ins.set_height_reference(f64::NAN).unwrap_err().quantity(), "height_reference");
    let pole = NavState::new(Geodetic::new(FRAC_PI_2, 0.0, 0.0), Vector3::zeros(), attitude);
    assert!(matches!(Strapdown::new(StrapdownConfig::default(), &pole), Err(Error::NearPole { .. })));
    assert!(Strapdown::new(StrapdownConfig { frame: NavFrame::Ecef, ..StrapdownConfig::default() }, &pole).is_ok());
    let tau = StrapdownConfig { vertical: VerticalChannel::Aided { time_constant: 0.0 }, ..StrapdownConfig::default() };
    assert_eq!(Strapdown::new(tau, &start).unwrap_err().quantity(), "time_constant");
    let not_unit = NavState { attitude: UnitQuaternion::new_unchecked(attitude.into_inner() * 2.0), ..start };
    assert_eq!(Strapdown::new(StrapdownConfig::default(), &not_unit).unwrap_err().quantity(), "attitude");
}

#[test]
fn resuming_from_parts_continues_identically() {
    // A binding keeps the stepper's parts in its own structs between steps; resuming from them
    // must not change a single bit.
    let traj = Manoeuvres::standard(WGS84);
    let times: Vec<f64> = (0..=200).map(|k| f64::from(k) / 100.0).collect();
    let increments = manoeuvre_increments(&traj, &times);
    for frame in [NavFrame::Ned, NavFrame::Ecef] {
        let cfg = StrapdownConfig { frame, ..StrapdownConfig::default() };
        let mut straight = Strapdown::new(cfg, &traj.truth(0.0).unwrap()).unwrap();
        let mut resumed = straight;
        for inc in &increments {
            straight.step(inc).unwrap();
            let (c, s, m) = resumed.parts();
            resumed = Strapdown::from_parts(c, s, m).unwrap();
            resumed.step(inc).unwrap();
        }
        assert_eq!(straight, resumed);
        let (c, s, m) = straight.parts();
        let other = StrapdownConfig { frame: if frame == NavFrame::Ned { NavFrame::Ecef } else { NavFrame::Ned }, ..c };
        assert_eq!(Strapdown::from_parts(other, s, m).unwrap_err().quantity(), "state");
    }
}
