//! Bad input to the newer modules (linearisation, propagation, drag, Allan deviation,
//! calibration, graphs, recorded samples, random streams): each case gets an error naming
//! the quantity at fault, where before it gave a non-finite result, an invalid one, or an error
//! naming something else. Invented values; the properties are the library's own contract.

use nalgebra::{SMatrix, SVector, Vector3};
use rotaframe::Error;
use rotaframe::calibrate::TriadCalibration;
use rotaframe::calibrate::allan::{AllanPoint, NoiseTerms, allan_deviation};
use rotaframe::earth::Geodetic;
use rotaframe::graph::FrameGraph;
use rotaframe::linearise::inertial::{check_initial_covariance, discretise, discretise_second_order, error_model};
use rotaframe::nalgebra;
use rotaframe::nav::NavState;
use rotaframe::nav::{CartesianSamples, SampledMotion, Strapdown, StrapdownConfig, stream_from_words};
use rotaframe::propagate::dop853::{Control, Tolerances, integrate};
use rotaframe::propagate::{AirDensity, Drag};

fn quantity<T: core::fmt::Debug>(r: Result<T, Error>) -> &'static str {
    r.unwrap_err().quantity()
}

#[test]
fn initial_covariances_must_be_covariances() {
    let ok = SMatrix::<f64, 15, 15>::identity();
    assert!(check_initial_covariance(&ok).is_ok());
    let mut negative = ok;
    negative[(4, 4)] = -1e-9;
    let mut correlated = ok;
    correlated[(0, 1)] = 1.0 + 1e-6;
    correlated[(1, 0)] = 1.0 + 1e-6;
    let mut indefinite = ok;
    for (i, j) in [(0, 1), (0, 2), (1, 2)] {
        indefinite[(i, j)] = -0.9; // pairwise −0.9: eigenvalue 1 − 1.8 < 0
        indefinite[(j, i)] = -0.9;
    }
    let huge = ok * 1e120;
    let mut nan = ok;
    nan[(3, 7)] = f64::NAN;
    for p0 in [negative, correlated, indefinite, huge, nan] {
        assert_eq!(quantity(check_initial_covariance(&p0)), "p0");
    }
    // Zero variance with zero covariances, and a correlation of exactly 1, are covariances.
    let mut edge = ok;
    edge[(5, 5)] = 0.0;
    edge[(0, 1)] = 1.0;
    edge[(1, 0)] = 1.0;
    assert!(check_initial_covariance(&edge).is_ok());
}

#[test]
fn discrete_forms_that_overflow_are_refused_naming_f_or_psd() {
    let f = SMatrix::<f64, 3, 3>::identity() * 1e300;
    let g = SMatrix::<f64, 3, 2>::zeros();
    let psd = SVector::<f64, 2>::zeros();
    assert_eq!(quantity(discretise(&f, &g, &psd, 100.0)), "f");
    assert_eq!(quantity(discretise_second_order(&f, &g, &psd, 100.0)), "f");
    let g = SMatrix::<f64, 3, 2>::repeat(1e200);
    let psd = SVector::<f64, 2>::repeat(1e200);
    assert_eq!(quantity(discretise(&SMatrix::zeros(), &g, &psd, 1.0)), "psd");
}

#[test]
fn error_model_inputs_beyond_the_imu_ranges_are_refused() {
    let here = NavState::new(Geodetic::from_degrees(45.0, 7.0, 200.0), Vector3::zeros(), Default::default());
    let ins = Strapdown::new(StrapdownConfig::default(), &here).unwrap();
    let (config, (_, state, _)) = (ins.config(), ins.parts());
    let taus = (&Vector3::repeat(f64::INFINITY), &Vector3::repeat(f64::INFINITY));
    let still = Vector3::new(0.0, 0.0, -9.8);
    assert_eq!(
        quantity(error_model::<15>(config, &state, &Vector3::new(1e13, 0.0, 0.0), &Vector3::zeros(), taus)),
        "specific_force"
    );
    assert_eq!(quantity(error_model::<15>(config, &state, &still, &Vector3::new(0.0, 2e6, 0.0), taus)), "angular_rate");
    assert!(error_model::<15>(config, &state, &still, &Vector3::zeros(), taus).is_ok());
}

#[test]
fn drag_refuses_non_finite_positions_and_overflowing_accelerations() {
    let constant = Drag::new(100.0, AirDensity::Constant(1.2), Vector3::zeros()).unwrap();
    assert_eq!(quantity(constant.checked_acceleration(&Vector3::new(f64::NAN, 0.0, 0.0), &Vector3::zeros())), "position");
    let exponential =
        Drag::new(100.0, AirDensity::Exponential { at_origin: 1.2, scale_height: 8000.0, up: Vector3::z() }, Vector3::zeros())
            .unwrap();
    let deep = Vector3::new(0.0, 0.0, -1e7); // exp(1250) overflows
    assert_eq!(quantity(exponential.checked_acceleration(&deep, &Vector3::new(10.0, 0.0, 0.0))), "drag");
}

#[test]
fn noise_term_deviations_refuse_bad_tau() {
    let terms = NoiseTerms { white_noise: 1e-3, bias_instability: 1e-5, rate_random_walk: 1e-6 };
    for tau in [0.0, -1.0, f64::NAN, f64::INFINITY, 1e13] {
        assert_eq!(quantity(terms.checked_deviation(tau)), "tau", "tau = {tau}");
    }
    assert!(terms.checked_deviation(10.0).unwrap().is_finite());
}

#[test]
fn a_confidence_within_rounding_of_one_is_named_as_confidence() {
    let samples: Vec<f64> = (0..1000).map(|k| ((k * 7919) % 101) as f64 * 1e-4).collect();
    let mut scratch = vec![0.0; samples.len() + 1];
    let mut out = [AllanPoint::default(); 2];
    let c = 1.0 - f64::EPSILON / 2.0; // the largest f64 below 1: (1 + c)/2 rounds to 1
    assert_eq!(quantity(allan_deviation(&samples, 0.01, &[1, 2], c, &mut scratch, &mut out)), "confidence");
}

#[test]
fn rebuilt_calibrations_are_validated() {
    let mut c = TriadCalibration::perfect();
    assert!(c.validate().is_ok());
    c.misalignment[(1, 1)] = 0.1;
    assert_eq!(quantity(c.validate()), "calibration");
    let mut c = TriadCalibration::perfect();
    c.covariance[(2, 2)] = -1.0;
    assert_eq!(quantity(c.validate()), "calibration");
    let mut c = TriadCalibration::perfect();
    c.noise.y = f64::INFINITY;
    assert_eq!(quantity(c.validate()), "calibration");
}

#[test]
fn graph_roots_and_samples_are_checked() {
    assert!(FrameGraph::try_new("", true).is_err());
    assert!(FrameGraph::try_new("a\nb", true).is_err());
    assert!(FrameGraph::from_toml("root = \"\"\n").is_err());
    // Samples 1e-100 s apart: refused when wrapped, naming the time, not later as a rotation.
    let times = [0.0, 1e-100, 1.0, 2.0];
    let positions = [[0.0; 3]; 4];
    let attitudes = [[1.0, 0.0, 0.0, 0.0]; 4];
    let samples =
        CartesianSamples { times: &times, positions: &positions, attitudes: &attitudes, velocities: None, angular_rates: None };
    let e = SampledMotion::new(samples).unwrap_err();
    assert_eq!((e.index, e.error.quantity()), (1, "time"));
}

#[test]
fn integration_spans_and_steps_below_the_time_resolution_are_named() {
    let f = |_: f64, y: &[f64; 1]| -> rotaframe::Result<[f64; 1]> { Ok([-y[0]]) };
    let go = |t0: f64, t1: f64, tol: Tolerances| integrate(f, t0, [1.0], t1, &tol, |_| Ok(Control::Continue)).map(|_| ());
    assert_eq!(quantity(go(1e9, 1e9 + 1e-7, Tolerances::default())), "t_span");
    assert_eq!(quantity(go(1e9, 1e9 + 5.0, Tolerances { max_step: 1e-9, ..Tolerances::default() })), "max_step");
    assert!(go(0.0, 5.0, Tolerances::default()).is_ok());
}

#[test]
fn the_all_zero_random_stream_state_is_refused() {
    assert_eq!(quantity(stream_from_words(&[0; 4])), "stream");
    assert!(stream_from_words(&[0, 0, 0, 1]).is_ok());
}
