//! Rate logs to increments (`nav::rates`): the rule's order measured against the exact
//! integrals of an analytic signal (calculus; the order of the rule is stated in the module),
//! jitter, gaps and bad tags.

use rotaframe::nalgebra::Vector3;
use rotaframe::nav::{ImuIncrement, RateLogError, increments_from_rates};

/// x(t) = (sin 3t, cos 2t, e^{t/2}) and its integral.
fn signal(t: f64) -> Vector3<f64> {
    Vector3::new((3.0 * t).sin(), (2.0 * t).cos(), (0.5 * t).exp())
}
fn integral(a: f64, b: f64) -> Vector3<f64> {
    let p = |t: f64| Vector3::new(-(3.0 * t).cos() / 3.0, (2.0 * t).sin() / 2.0, 2.0 * (0.5 * t).exp());
    p(b) - p(a)
}

/// The largest error of an interior increment for tags at step `h` with ±20 % jitter.
fn worst_interior_error(h: f64) -> f64 {
    let n = (2.0 / h) as usize;
    let t: Vec<f64> = (0..=n).map(|k| k as f64 * h + if k % 2 == 1 { 0.2 * h } else { -0.1 * h * ((k % 3) as f64) }).collect();
    let x: Vec<Vector3<f64>> = t.iter().map(|&s| signal(s)).collect();
    let mut out = vec![ImuIncrement::default(); n];
    increments_from_rates(&t, &x, &x, None, &mut out).unwrap();
    (1..n - 1).map(|k| (out[k].delta_angle - integral(t[k], t[k + 1])).amax()).fold(0.0, f64::max)
}

#[test]
fn interior_increments_are_fifth_order_in_the_interval_with_jitter() {
    let (coarse, fine) = (worst_interior_error(0.02), worst_interior_error(0.01));
    println!("worst interior increment error: {coarse:.3e} at 50 Hz, {fine:.3e} at 100 Hz, ratio {:.1}", coarse / fine);
    // A fourth-order rule has O(h⁵) error per interval: halving h divides it by 32; 20 allows
    // for the jitter pattern changing with h.
    assert!(coarse / fine > 20.0);
    // The size: h⁵ max|x⁗| (81 for sin 3t) times the rule's constant, about 1/100.
    assert!(fine < 1e-9);
}

#[test]
fn gaps_above_max_gap_and_bad_tags_are_refused_by_name() {
    let x = [Vector3::new(0.1, 0.0, 0.0); 4];
    let mut out = [ImuIncrement::default(); 3];
    let gap = increments_from_rates(&[0.0, 0.01, 0.5, 0.51], &x, &x, Some(0.1), &mut out).unwrap_err();
    assert_eq!(gap, RateLogError::Gap(rotaframe::nav::DataGap { index: 1, start: 0.01, end: 0.5 }));
    assert!(gap.to_string().contains("from 0.01 s to 0.5 s"));
    assert!(increments_from_rates(&[0.0, 0.01, 0.5, 0.51], &x, &x, None, &mut out).is_ok());
    for bad in [[0.0, 0.01, 0.01, 0.02], [0.0, 0.02, 0.01, 0.03]] {
        let e = increments_from_rates(&bad, &x, &x, None, &mut out).unwrap_err();
        assert!(matches!(e, RateLogError::Input { index: 1, error } if error.quantity() == "interval"), "{e}");
    }
    let mut nan = x;
    nan[2].y = f64::NAN;
    let before = out;
    let e = increments_from_rates(&[0.0, 0.01, 0.02, 0.03], &nan, &x, None, &mut out).unwrap_err();
    assert!(matches!(e, RateLogError::Input { index: 2, error } if error.quantity() == "angular_rate"));
    assert_eq!(out, before);
}

/// The classical coning motion (P. G. Savage, *Strapdown Analytics* (1998), §7.1.1.1; the
/// form from memory): attitude relative to NED `C(t) = R_z(Ωt) R_x(α) R_z(−Ωt)`, whose body
/// rate is `ω = Ω (−sin α sin Ωt, sin α cos Ωt, cos α − 1)` (from `Cᵀ Ċ = [ω×]`, worked here by
/// hand), at rest at 45° N; the IMU's rate is that plus the Earth's rate, its specific force
/// `−Cᵀ g`. Returns the attitude error (rad) after `seconds` of the rate log at `rate` Hz
/// (tags moved by `jitter` of the spacing in a fixed pattern), converted and mechanized.
fn coning_attitude_error(rate: f64, jitter: f64, seconds: f64) -> f64 {
    use rotaframe::earth::{Geodetic, WGS84, earth_rate_ned, gravity_ned};
    use rotaframe::nalgebra::UnitQuaternion;
    use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
    let (omega, alpha) = (std::f64::consts::TAU * 2.0, 2.0_f64.to_radians());
    let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
    let attitude = |t: f64| {
        UnitQuaternion::from_axis_angle(&Vector3::z_axis(), omega * t)
            * UnitQuaternion::from_axis_angle(&Vector3::x_axis(), alpha)
            * UnitQuaternion::from_axis_angle(&Vector3::z_axis(), -omega * t)
    };
    let earth = earth_rate_ned(&WGS84, here.latitude).unwrap();
    let gravity = gravity_ned(&WGS84, here.latitude, here.height).unwrap();
    let n = (seconds * rate) as usize;
    let h = 1.0 / rate;
    let t: Vec<f64> = (0..=n)
        .map(|k| k as f64 * h + if k > 0 && k < n { jitter * h * ((k * 7919 % 13) as f64 / 6.0 - 1.0) } else { 0.0 })
        .collect();
    let body_rate = |s: f64| {
        let coning = Vector3::new(-alpha.sin() * (omega * s).sin(), alpha.sin() * (omega * s).cos(), alpha.cos() - 1.0) * omega;
        coning + attitude(s).inverse() * earth
    };
    let w: Vec<Vector3<f64>> = t.iter().map(|&s| body_rate(s)).collect();
    let f: Vec<Vector3<f64>> = t.iter().map(|&s| attitude(s).inverse() * -gravity).collect();
    let mut increments = vec![ImuIncrement::default(); n];
    increments_from_rates(&t, &w, &f, None, &mut increments).unwrap();
    let mut ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), attitude(0.0))).unwrap();
    for increment in &increments {
        ins.step(increment).unwrap();
    }
    (ins.state().attitude * attitude(t[n]).inverse()).angle()
}

#[test]
fn a_coning_rate_log_converted_and_mechanized_converges_at_fourth_order() {
    let errors: Vec<f64> = [100.0, 200.0, 400.0].iter().map(|&r| coning_attitude_error(r, 0.0, 10.0)).collect();
    println!(
        "coning attitude error after 10 s: {:.3e} (100 Hz), {:.3e} (200 Hz), {:.3e} (400 Hz)",
        errors[0], errors[1], errors[2]
    );
    // Fourth order: 16 per doubling of the rate; 10 allows for the mechanization's own
    // (two-sample coning) error, also fourth order, adding with another constant.
    assert!(errors[0] / errors[1] > 10.0 && errors[1] / errors[2] > 10.0, "{errors:?}");
    // A jittered log (tags moved by up to ±17 % of the spacing) gives the same result as an
    // even one to the rule's order: the difference is of the size of the even log's error.
    let jittered = coning_attitude_error(200.0, 0.17, 10.0);
    println!("jittered 200 Hz: {jittered:.3e}");
    assert!(jittered < 4.0 * errors[1] + 1e-12, "jittered {jittered} vs even {}", errors[1]);
}

#[test]
fn block_by_block_increments_equal_the_two_pass_ones_bit_for_bit() {
    use rotaframe::nav::{RATE_LOG_BLOCK, increments_in_blocks};
    // Three blocks and a part (both write the same increments with the same code, only the
    // order of checking and writing differs): equality is exact.
    let n = 3 * RATE_LOG_BLOCK + 17;
    let t: Vec<f64> = (0..n).map(|k| 0.01 * k as f64 + 1e-4 * ((k * 7 % 5) as f64)).collect();
    let x: Vec<Vector3<f64>> = t.iter().map(|&s| signal(s)).collect();
    let mut two_pass = vec![ImuIncrement::default(); n - 1];
    increments_from_rates(&t, &x, &x, Some(0.02), &mut two_pass).unwrap();
    let mut blocks = vec![ImuIncrement::default(); n - 1];
    let mut next = 0;
    increments_in_blocks(&t, &x, &x, Some(0.02), |first, block| {
        assert_eq!(first, next, "blocks arrive in order");
        blocks[first..first + block.len()].copy_from_slice(block);
        next = first + block.len();
    })
    .unwrap();
    assert_eq!(next, n - 1);
    for (a, b) in two_pass.iter().zip(&blocks) {
        assert_eq!((a.delta_angle, a.delta_velocity, a.interval), (b.delta_angle, b.delta_velocity, b.interval));
    }
    // A bad sample in the last sample, a backward tag and a gap in later blocks are the errors
    // the whole-log check gives.
    let mut bad = x.clone();
    bad[n - 1].y = f64::NAN;
    let mut backward = t.clone();
    backward[2 * RATE_LOG_BLOCK + 3] = backward[2 * RATE_LOG_BLOCK + 2];
    let mut gap = t.clone();
    for s in &mut gap[RATE_LOG_BLOCK + 5..] {
        *s += 1.0;
    }
    for (tags, rates) in [(&t, &bad), (&backward, &x), (&gap, &x)] {
        let whole = rotaframe::nav::check_rate_log(tags, rates, rates, Some(0.5)).unwrap_err();
        let blockwise = increments_in_blocks(tags, rates, rates, Some(0.5), |_, _| {}).unwrap_err();
        assert_eq!(whole, blockwise);
    }
}
