//! The C aided navigator gives the same numbers as the core's, to the bit: one seeded run of
//! a manoeuvre-like sequence (random rates and forces on a level body at 100 Hz) with position,
//! velocity, zero-velocity and height updates, through `rf_aided_*` and through
//! `rotaframe::aided::AidedNavigator`; and the C smoother gives the core recorder's smoothed
//! solution.

use rotaframe::aided::{AidedNavigator, FilterSettings, Measurement};
use rotaframe::earth::Geodetic;
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::{ImuErrorModel, ImuIncrement, NavState, SensorErrorModel, Strapdown, StrapdownConfig};
use rotaframe_c::aided::*;
use rotaframe_c::nav::{
    rf_imu_error_model, rf_imu_increment, rf_nav_state, rf_sensor_errors, rf_strapdown, rf_strapdown_config, rf_strapdown_init,
};
use rotaframe_c::status::RF_STATUS_OK;
use rotaframe_c::types::{rf_earth_model, rf_geodetic, rf_vec3};

fn v(x: Vector3<f64>) -> rf_vec3 {
    x.into()
}

/// The core's navigator and the C one, made from the same start and model.
fn pair() -> (AidedNavigator, rf_aided_nav) {
    let here = Geodetic::new(0.8, 0.1, 300.0);
    let start = NavState::new(here, Vector3::new(5.0, 1.0, 0.0), UnitQuaternion::from_euler_angles(0.01, -0.02, 0.4));
    let mut p0 = [0.0; 225];
    for i in 0..15 {
        p0[i * 16] = if i < 2 {
            1e-12
        } else if i < 9 {
            1e-3
        } else {
            1e-6
        };
    }
    let gyro = SensorErrorModel {
        noise_density: Vector3::repeat(1e-5),
        markov_sigma: Vector3::repeat(1e-6),
        markov_time: Vector3::repeat(300.0),
        ..Default::default()
    };
    let accelerometer = SensorErrorModel {
        noise_density: Vector3::repeat(5e-4),
        markov_sigma: Vector3::repeat(1e-3),
        bias: Vector3::new(1e-3, 0.0, -2e-3),
        ..Default::default()
    };
    let model = ImuErrorModel { gyro, accelerometer };
    let core = AidedNavigator::new(
        Strapdown::new(StrapdownConfig::default(), &start).unwrap(),
        &model,
        &p0,
        15,
        FilterSettings::default(),
    )
    .unwrap();

    let mut wgs = rf_earth_model::default();
    assert_eq!(unsafe { rotaframe_c::earth::rf_earth_model_wgs84(&mut wgs) }, RF_STATUS_OK);
    let config = rf_strapdown_config { earth: wgs, ..Default::default() };
    let initial: rf_nav_state = (&start).into();
    let mut stepper = rf_strapdown::default();
    assert_eq!(unsafe { rf_strapdown_init(&config, &initial, &mut stepper) }, RF_STATUS_OK);
    let sensor = |s: &SensorErrorModel| rf_sensor_errors {
        bias: v(s.bias),
        scale_factor: v(s.scale_factor),
        misalignment: [0.0; 9],
        noise_density: v(s.noise_density),
        markov_sigma: v(s.markov_sigma),
        markov_time: v(s.markov_time),
    };
    let errors = rf_imu_error_model { gyro: sensor(&gyro), accelerometer: sensor(&accelerometer) };
    let mut c = rf_aided_nav { storage: [0; RF_AIDED_NAV_WORDS] };
    assert_eq!(unsafe { rf_aided_init(&stepper, &errors, p0.as_ptr(), 15, 0.999, 1, &mut c) }, RF_STATUS_OK);
    (core, c)
}

#[test]
fn c_aided_navigator_matches_the_core_bit_for_bit() {
    let (mut core, mut c) = pair();
    let mut seed = 11u64;
    let mut next = move || {
        seed = seed.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (seed >> 11) as f64 / (1u64 << 53) as f64 - 0.5
    };
    let mut report = rf_aided_report::default();
    for k in 0..2000 {
        let inc = ImuIncrement::new(
            Vector3::new(next(), next(), next()) * 1e-3,
            Vector3::new(next() * 0.02, next() * 0.02, -0.098 + next() * 0.02),
            0.01,
        );
        core.predict(&inc).unwrap();
        let c_inc: rf_imu_increment = (&inc).into();
        assert_eq!(unsafe { rf_aided_predict(&mut c, &c_inc) }, RF_STATUS_OK);
        if (k + 1) % 100 == 0 {
            let s = core.state();
            let fix = Geodetic::new(s.position.latitude + 1e-7, s.position.longitude - 1e-7, s.position.height + 0.5);
            let sigma = Vector3::new(1.0, 1.0, 2.0);
            let arm = Vector3::new(0.5, 0.1, -1.0);
            let a = core.update(&Measurement::Position { position: fix, sigma_ned: sigma, lever_arm: arm }).unwrap();
            let fix_c: rf_geodetic = fix.into();
            assert_eq!(unsafe { rf_aided_update_position(&mut c, &fix_c, &v(sigma), &v(arm), &mut report) }, RF_STATUS_OK);
            assert_eq!(report.nis, a.nis);
            let vel = s.velocity_ned + Vector3::repeat(0.05);
            core.update(&Measurement::Velocity { velocity_ned: vel, sigma_ned: Vector3::repeat(0.1), lever_arm: arm }).unwrap();
            assert_eq!(
                unsafe { rf_aided_update_velocity(&mut c, &v(vel), &v(Vector3::repeat(0.1)), &v(arm), &mut report) },
                RF_STATUS_OK
            );
            core.update(&Measurement::Height { height: s.position.height - 0.3, sigma: 0.5 }).unwrap();
            assert_eq!(unsafe { rf_aided_update_height(&mut c, s.position.height - 0.3, 0.5, &mut report) }, RF_STATUS_OK);
        }
    }
    let mut state = rf_nav_state::default();
    assert_eq!(unsafe { rf_aided_state(&c, &mut state) }, RF_STATUS_OK);
    let ours: rf_nav_state = (&core.state()).into();
    assert_eq!(state, ours);
    let (mut pc, mut pr) = ([0.0; 225], [0.0; 225]);
    assert_eq!(unsafe { rf_aided_covariance(&c, pc.as_mut_ptr(), 225) }, RF_STATUS_OK);
    core.write_covariance(&mut pr).unwrap();
    assert_eq!(pc, pr);
}

#[test]
fn c_smoother_matches_the_core_bit_for_bit() {
    use rotaframe::aided::smoother::{SmoothedPoint, SmoothedSink, SmootherRecorder};
    use rotaframe_c::aided::smoother::*;
    struct Points(Vec<(rf_nav_state, Vec<f64>, Vec<f64>)>);
    impl SmoothedSink for Points {
        fn point(&mut self, index: usize, point: &SmoothedPoint<'_>) {
            self.0[index] = ((&point.state).into(), point.sigma.to_vec(), point.sensor_errors.to_vec());
        }
    }
    let (mut core, c) = pair();
    let mut recorder = SmootherRecorder::new(&core).unwrap();
    let mut smoother = core::ptr::null_mut();
    assert_eq!(unsafe { rf_smoother_new(&c, 1000, 20, &mut smoother) }, RF_STATUS_OK);
    let nav = unsafe { rf_smoother_nav(smoother) };
    let mut report = rf_aided_report::default();
    for k in 0..1000 {
        let inc = ImuIncrement::new(Vector3::new(1e-5, -2e-5, 3e-4), Vector3::new(0.01, -0.005, -0.098), 0.01);
        recorder.predict(&mut core, &inc).unwrap();
        assert_eq!(unsafe { rf_aided_predict(nav, &(&inc).into()) }, RF_STATUS_OK);
        if (k + 1) % 100 == 0 {
            let s = core.state();
            let fix = Geodetic::new(s.position.latitude + 1e-7, s.position.longitude - 1e-7, s.position.height + 0.5);
            let (sigma, arm) = (Vector3::new(1.0, 1.0, 2.0), Vector3::new(0.5, 0.1, -1.0));
            // The C smoother records each measurement kind as its own set (position: 0).
            recorder.update(&mut core, &Measurement::Position { position: fix, sigma_ned: sigma, lever_arm: arm }, 0).unwrap();
            let fix_c: rf_geodetic = fix.into();
            assert_eq!(unsafe { rf_aided_update_position(nav, &fix_c, &v(sigma), &v(arm), &mut report) }, RF_STATUS_OK);
        }
    }
    let mut count = 0;
    assert_eq!(unsafe { rf_smoother_len(smoother, &mut count) }, RF_STATUS_OK);
    assert_eq!(count, recorder.len());
    let mut ours = Points(vec![(rf_nav_state::default(), Vec::new(), Vec::new()); count]);
    recorder.log(&core).unwrap().smooth(&mut ours).unwrap();
    let (mut states, mut sigma, mut errors) = (vec![rf_nav_state::default(); count], vec![0.0; count * 15], vec![0.0; count * 6]);
    let status = unsafe { rf_smoother_smooth(smoother, count, states.as_mut_ptr(), sigma.as_mut_ptr(), errors.as_mut_ptr()) };
    assert_eq!(status, RF_STATUS_OK);
    for (k, (state, s, e)) in ours.0.iter().enumerate() {
        assert_eq!(&states[k], state);
        assert_eq!(&sigma[k * 15..(k + 1) * 15], s.as_slice());
        assert_eq!(&errors[k * 6..(k + 1) * 6], e.as_slice());
    }
    unsafe { rf_smoother_free(smoother) };
}
