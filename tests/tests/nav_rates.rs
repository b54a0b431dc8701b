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
