//! The inertial error-state model against the code it linearises: `F` against a numerical
//! linearisation of one `Strapdown` step (perturb the state or the sensor errors, step,
//! difference), for both mechanizations, both gravity models and the vertical-channel modes;
//! and the discrete form's own checks (Φ of a nilpotent F, Q_d of a random walk and of a
//! Gauss–Markov process against their closed forms).
//!
//! What the step allows. `F` is evaluated at the start of the interval; the step integrates
//! with mid-interval values and the body's rotation within the interval, so
//! `(Φ_step − I)/T` and `(Φ_model − I)/T` agree to first order in `T` and differ in their
//! second-order parts. The test asserts, at T = 10 ms and 1 ms, that every entry differs by
//! less than 2 % of its `F` entry plus twice the model's second-order part (see
//! `disagreement`), that in the units of typical errors the largest difference is below 2e-2
//! of its row, and that this falls in proportion to T (ratio above 5 for a tenfold shorter
//! step). A wrong sign, a missing term or a halved term in `F`, even in the ~1e-9 /s entries of
//! the NED position rows, fails the first assertion by a factor of 40 or more.

use nalgebra::{SMatrix, SVector, UnitQuaternion, Vector3};
use rotaframe::earth::{self, Geodetic, GravityModel, WGS84};
use rotaframe::linearise::inertial::{self, discretise};
use rotaframe::nalgebra;
use rotaframe::nav::{
    ImuIncrement, MechanizationState, NavFrame, NavState, StepMemory, Strapdown, StrapdownConfig, VerticalChannel,
};

const N: usize = 21;

fn start_state() -> NavState {
    NavState::new(
        Geodetic::from_degrees(38.0, -9.0, 350.0),
        Vector3::new(42.0, -17.0, 1.5),
        UnitQuaternion::from_euler_angles(0.05, -0.08, 2.2),
    )
}

/// An increment of a turning, accelerating vehicle over `t`.
fn increment(t: f64) -> ImuIncrement {
    ImuIncrement::new(Vector3::new(0.02, -0.03, 0.25) * t, Vector3::new(1.2, -0.4, -9.9) * t, t)
}

/// The stepper's state with the error `dx` applied (estimate = truth + error), and the
/// increment the estimate sees (with the sensor errors of `dx`).
fn perturbed(
    config: &StrapdownConfig,
    truth: &MechanizationState,
    inc: &ImuIncrement,
    dx: &SVector<f64, N>,
) -> (MechanizationState, ImuIncrement) {
    let v3 = |k: usize| Vector3::new(dx[k], dx[k + 1], dx[k + 2]);
    let state = match *truth {
        MechanizationState::Ned { position, velocity_ned, attitude } => MechanizationState::Ned {
            position: Geodetic::new(position.latitude + dx[0], position.longitude + dx[1], position.height + dx[2]),
            velocity_ned: velocity_ned + v3(3),
            attitude: UnitQuaternion::from_scaled_axis(v3(6)) * attitude,
        },
        MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef } => MechanizationState::Ecef {
            position_ecef: position_ecef + v3(0),
            velocity_ecef: velocity_ecef + v3(3),
            attitude_ecef: UnitQuaternion::from_scaled_axis(v3(6)) * attitude_ecef,
        },
    };
    let _ = config;
    let t = inc.interval;
    let measured = ImuIncrement::new(
        inc.delta_angle + v3(12) * t + inc.delta_angle.component_mul(&v3(18)),
        inc.delta_velocity + v3(9) * t + inc.delta_velocity.component_mul(&v3(15)),
        t,
    );
    (state, measured)
}

/// The error of `estimate` relative to `truth` in the model's coordinates (sensor errors as
/// given: they are constants over a step).
fn error(estimate: &MechanizationState, truth: &MechanizationState, sensors: &SVector<f64, N>) -> SVector<f64, N> {
    let mut e = *sensors;
    let (dp, dv, psi) = match (estimate, truth) {
        (
            MechanizationState::Ned { position: a, velocity_ned: va, attitude: qa },
            MechanizationState::Ned { position: b, velocity_ned: vb, attitude: qb },
        ) => (
            Vector3::new(a.latitude - b.latitude, a.longitude - b.longitude, a.height - b.height),
            va - vb,
            (qa * qb.inverse()).scaled_axis(),
        ),
        (
            MechanizationState::Ecef { position_ecef: a, velocity_ecef: va, attitude_ecef: qa },
            MechanizationState::Ecef { position_ecef: b, velocity_ecef: vb, attitude_ecef: qb },
        ) => (a - b, va - vb, (qa * qb.inverse()).scaled_axis()),
        _ => unreachable!(),
    };
    e.fixed_rows_mut::<3>(0).copy_from(&dp);
    e.fixed_rows_mut::<3>(3).copy_from(&dv);
    e.fixed_rows_mut::<3>(6).copy_from(&psi);
    e
}

/// The numerical state-transition matrix of one step of length `t`.
fn step_transition(
    config: &StrapdownConfig,
    t: f64,
) -> (SMatrix<f64, N, N>, SMatrix<f64, N, N>, SMatrix<f64, N, N>, SMatrix<f64, N, N>) {
    let ins = Strapdown::new(*config, &start_state()).unwrap();
    let (_, truth, _) = ins.parts();
    let memory = StepMemory { height_reference: start_state().position.height, ..StepMemory::default() };
    let inc = increment(t);
    let run = |dx: &SVector<f64, N>| {
        let (state, measured) = perturbed(config, &truth, &inc, dx);
        let mut s = Strapdown::from_parts(*config, state, memory).unwrap();
        s.step(&measured).unwrap();
        s.parts().1
    };
    let zero = SVector::<f64, N>::zeros();
    let nominal = run(&zero);
    // Steps: 1e-4 rad in latitude, longitude and attitude, 10 m in position, 0.1 m/s in
    // velocity, 1e-3 m/s² and 1e-5 rad/s for biases, 1e-3 for scale factors. The step is
    // smooth on those scales (central differences cancel the second-order terms; the third
    // order leaves about h² ≈ 1e-8 of each entry), and large enough that the rounding of the
    // perturbed state stays below the smallest entries checked (the position rows of the NED
    // form, ~1e-8 per step).
    let h = [
        1e-4, 1e-4, 10.0, 0.1, 0.1, 0.1, 1e-4, 1e-4, 1e-4, 1e-3, 1e-3, 1e-3, 1e-5, 1e-5, 1e-5, 1e-3, 1e-3, 1e-3, 1e-3, 1e-3, 1e-3,
    ];
    let h: Vec<f64> = match config.frame {
        NavFrame::Ned => h.to_vec(),
        NavFrame::Ecef => h.iter().enumerate().map(|(k, &x)| if k < 3 { 10.0 } else { x }).collect(),
    };
    // The rounding floor of each entry of (Φ − I)/T: a difference quotient cannot resolve less
    // than about ε |y_i| / h_k, with |y_i| the magnitude of the state component it differences.
    let magnitude = |i: usize| match (config.frame, i) {
        (NavFrame::Ned, 0) => 0.7,
        (NavFrame::Ned, 1) => 0.2,
        (_, 6..=8) => 1.0,
        (NavFrame::Ned, 2) => 400.0,
        (NavFrame::Ecef, 0..=2) => 6.4e6,
        (_, 3..=5) => 50.0,
        _ => 0.0,
    };
    let floor = SMatrix::<f64, N, N>::from_fn(|i, k| 10.0 * f64::EPSILON * magnitude(i) / (h[k] * t));
    let mut phi = SMatrix::<f64, N, N>::zeros();
    for k in 0..N {
        let mut dx = zero;
        dx[k] = h[k];
        let plus = error(&run(&dx), &nominal, &dx);
        let minus = error(&run(&-dx), &nominal, &-dx);
        phi.set_column(k, &((plus - minus) / (2.0 * h[k])));
    }
    let (f, g) = inertial::error_model::<N>(
        config,
        &truth,
        &(inc.delta_velocity / t),
        &(inc.delta_angle / t),
        (&Vector3::repeat(f64::INFINITY), &Vector3::repeat(f64::INFINITY)),
    )
    .unwrap();
    let (model, _) = discretise(&f, &g, &SVector::<f64, 12>::zeros(), t).unwrap();
    (phi, model, floor, f)
}

/// How far the step and the model disagree, in two measures.
///
/// Entry by entry, over every entry however small: the difference of
/// `(Φ − I)/T` between them beyond the rounding floor of the numerical side, as a fraction of
/// what is allowed, `2e-2 |F_ik| + 2 |S_ik|`, where `S = (Φ_model − I)/T − F` is the model's own
/// second-order part (the step and the model agree to first order in `T`; their second-order
/// parts come from different intra-step schemes and may differ by up to their size). A wrong
/// sign or a missing term of `F` exceeds this wherever its entry is larger than its second
/// order part; an entry where both are zero must agree to the rounding floor. And over all entries in the units of typical errors (each entry relative to its
/// row's largest, with the state scaled by 1 µrad or 6.4 m in position, 1 m/s, 1 mrad,
/// 1e-3 m/s², 1e-6 rad/s, 1e-4 for scale factors).
fn disagreement(
    step: &SMatrix<f64, N, N>,
    model: &SMatrix<f64, N, N>,
    floor: &SMatrix<f64, N, N>,
    f: &SMatrix<f64, N, N>,
    frame: NavFrame,
    t: f64,
) -> (f64, (usize, usize), f64) {
    let eye = SMatrix::<f64, N, N>::identity();
    let (da, db) = ((step - eye) / t, (model - eye) / t);
    let d: [f64; 7] = match frame {
        NavFrame::Ned => [1e-6, 1.0, 1e-3, 1e-3, 1e-6, 1e-4, 1e-4],
        NavFrame::Ecef => [6.4, 1.0, 1e-3, 1e-3, 1e-6, 1e-4, 1e-4],
    };
    let unit = |i: usize| if frame == NavFrame::Ned && i == 2 { 6.4 } else { d[i / 3] };
    let mut worst: (f64, (usize, usize), f64) = (0.0, (0, 0), 0.0);
    for i in 0..N {
        let row_scale = (0..N).map(|k| (db[(i, k)] * unit(k) / unit(i)).abs()).fold(0.0, f64::max);
        for k in 0..N {
            let excess = ((da[(i, k)] - db[(i, k)]).abs() - floor[(i, k)]).max(0.0);
            let allowed = 2e-2 * f[(i, k)].abs() + 2.0 * (db[(i, k)] - f[(i, k)]).abs();
            let share = if excess == 0.0 { 0.0 } else { excess / allowed };
            if share > worst.0 {
                worst = (share, (i, k), worst.2);
            }
            worst.2 = worst.2.max(excess * unit(k) / unit(i) / row_scale.max(1e-300));
        }
    }
    worst
}

#[test]
fn the_error_model_is_the_linearised_strapdown_step_in_every_configuration() {
    let mut configs = Vec::new();
    for frame in [NavFrame::Ned, NavFrame::Ecef] {
        for gravity in [GravityModel::Normal, GravityModel::J2] {
            configs.push(StrapdownConfig { frame, gravity, ..StrapdownConfig::default() });
        }
        configs.push(StrapdownConfig {
            frame,
            vertical: VerticalChannel::Aided { time_constant: 60.0 },
            ..StrapdownConfig::default()
        });
    }
    for config in configs {
        let (coarse, at, coarse_scaled) = {
            let (phi, model, floor, f) = step_transition(&config, 0.01);
            disagreement(&phi, &model, &floor, &f, config.frame, 0.01)
        };
        let (fine, _, fine_scaled) = {
            let (phi, model, floor, f) = step_transition(&config, 0.001);
            disagreement(&phi, &model, &floor, &f, config.frame, 0.001)
        };
        println!(
            "{:?} {:?} {:?}: worst entry {coarse:.2e} of its allowance at {at:?}, {coarse_scaled:.2e} in error units (10 ms); {fine:.2e}, {fine_scaled:.2e} (1 ms)",
            config.frame, config.gravity, config.vertical
        );
        assert!(coarse < 1.0 && fine < 1.0, "{config:?}: entry {at:?} is {coarse} of its allowance (1 ms: {fine})");
        assert!(coarse_scaled < 2e-2, "{config:?}: {coarse_scaled} in error units");
        assert!(
            coarse_scaled / fine_scaled > 5.0,
            "{config:?}: the difference must fall with the step ({coarse_scaled} → {fine_scaled})"
        );
    }
}

#[test]
fn discretisation_matches_closed_forms() {
    // A double integrator x'' = w (F nilpotent): Φ = [[1, T], [0, 1]],
    // Q_d = q [[T³/3, T²/2], [T²/2, T]] (Van Loan 1978; any estimation text, e.g. Bar-Shalom,
    // Li and Kirubarajan, Estimation with Applications to Tracking and Navigation, §6.2).
    let f = SMatrix::<f64, 2, 2>::new(0.0, 1.0, 0.0, 0.0);
    let g = SMatrix::<f64, 2, 1>::new(0.0, 1.0);
    let (q, t) = (0.3, 7.5);
    let (phi, qd) = discretise(&f, &g, &SVector::<f64, 1>::new(q), t).unwrap();
    assert_eq!(phi, SMatrix::<f64, 2, 2>::new(1.0, t, 0.0, 1.0));
    let expected = SMatrix::<f64, 2, 2>::new(t.powi(3) / 3.0, t * t / 2.0, t * t / 2.0, t) * q;
    assert!((qd - expected).amax() < 1e-14 * expected.amax(), "{qd} vs {expected}");
    // A Gauss–Markov process b' = −b/τ + w, w of density 2σ²/τ: Φ = e^{−T/τ},
    // Q_d = σ² (1 − e^{−2T/τ}) (Gelb 1974, ch. 3), over long intervals (scaling and squaring:
    // k squarings multiply the series' relative error of ~1e-16 by 2^k, 2^11 for T/τ = 333,
    // hence 1e-12 and 1e-11).
    for (tau, t) in [(100.0, 0.01), (100.0, 37.0), (3.0, 1000.0)] {
        let sigma: f64 = 2e-4;
        let f = SMatrix::<f64, 1, 1>::new(-1.0 / tau);
        let (phi, qd) =
            discretise(&f, &SMatrix::<f64, 1, 1>::identity(), &SVector::<f64, 1>::new(2.0 * sigma * sigma / tau), t).unwrap();
        assert!(
            (phi[(0, 0)] / (-t / tau).exp() - 1.0).abs() < 1e-11,
            "Φ at τ = {tau}, T = {t}: {}",
            phi[(0, 0)] / (-t / tau).exp() - 1.0
        );
        assert!((qd[(0, 0)] / (sigma * sigma * (1.0 - (-2.0 * t / tau).exp())) - 1.0).abs() < 1e-12, "Q_d at τ = {tau}, T = {t}");
    }
    assert_eq!(discretise(&f, &g, &SVector::<f64, 1>::new(-1.0), 1.0).unwrap_err().quantity(), "psd");
    assert_eq!(discretise(&f, &g, &SVector::<f64, 1>::new(1.0), 0.0).unwrap_err().quantity(), "interval");
    let _ = earth::WGS84;
    let _ = WGS84;
}

/// The 15-state model `(F, G)` of the stepper at the start state in the turning, accelerating
/// increment at 100 Hz, invented noise densities and the resulting `Q_c`.
fn manoeuvre_model(
    config: StrapdownConfig,
) -> (SMatrix<f64, 15, 15>, SMatrix<f64, 15, 12>, SVector<f64, 12>, SMatrix<f64, 15, 15>) {
    let ins = Strapdown::new(config, &start_state()).unwrap();
    let (_, state, _) = ins.parts();
    let inc = increment(0.01);
    let tau = Vector3::repeat(300.0);
    let (f, g) =
        inertial::error_model::<15>(&config, &state, &(inc.delta_velocity / 0.01), &(inc.delta_angle / 0.01), (&tau, &tau))
            .unwrap();
    let psd = SVector::<f64, 12>::from_fn(|i, _| {
        [2.5e-7, 2.5e-7, 2.5e-7, 1e-10, 1e-10, 1e-10, 6e-9, 6e-9, 6e-9, 6e-15, 6e-15, 6e-15][i]
    });
    let qc = g * SMatrix::<f64, 12, 12>::from_diagonal(&psd) * g.transpose();
    (f, g, psd, qc)
}

#[test]
fn covariance_propagation_equals_phi_p_phi_transpose_plus_qd() {
    // `propagate_covariance` solves Ṗ = F P + P Fᵀ + Q_c by its own series; it must agree with
    // Φ P Φᵀ + Q_d from `discretise_covariance` (Van Loan 1978: both are the exact solution)
    // entry by entry within 1e-13 of each entry's scale |P_ij| + √(P_ii P_jj) (rounding of
    // two different sums of ~10 terms), from a full covariance and from one with zero
    // navigation variances, at 100 Hz and over 2 s (the long-interval path).
    let config = StrapdownConfig { vertical: VerticalChannel::Aided { time_constant: 80.0 }, ..StrapdownConfig::default() };
    let (f, _, _, qc) = manoeuvre_model(config);
    let mut rng = rotaframe_tests::Seeded(3);
    let sd = [1e-6, 1e-6, 5.0, 0.1, 0.1, 0.1, 1e-3, 1e-3, 1e-2, 1e-3, 1e-3, 1e-3, 1e-6, 1e-6, 1e-6];
    let a = SMatrix::<f64, 15, 15>::from_fn(|i, _| sd[i] * rng.next_signed());
    let full = a * a.transpose() + SMatrix::<f64, 15, 15>::from_diagonal(&SVector::<f64, 15>::from_fn(|i, _| sd[i] * sd[i]));
    let biases_only = inertial::bias_covariance::<15>(&rotaframe::nav::ImuErrorModel::default()) + {
        let mut p = SMatrix::<f64, 15, 15>::zeros();
        for i in 9..15 {
            p[(i, i)] = sd[i] * sd[i];
        }
        p
    };
    for p in [full, biases_only] {
        for t in [0.01, 2.0] {
            let series = inertial::propagate_covariance(&f, &qc, &p, t);
            let (phi, qd) = inertial::discretise_covariance(&f, &qc, t);
            let direct = phi * p * phi.transpose() + qd;
            for i in 0..15 {
                for j in 0..15 {
                    let scale = direct[(i, j)].abs() + (direct[(i, i)] * direct[(j, j)]).sqrt();
                    assert!(
                        (series[(i, j)] - direct[(i, j)]).abs() <= 1e-13 * scale,
                        "T = {t}: entry ({i}, {j}): {} vs {}",
                        series[(i, j)],
                        direct[(i, j)]
                    );
                }
            }
        }
    }
}

#[test]
fn second_order_discretisation_is_the_truncated_series_within_its_remainder_bound() {
    // Φ₂ = I + F T + F² T²/2 and Q₂ = Q_c T + (F Q_c + Q_c Fᵀ) T²/2 miss the series' terms
    // k ≥ 3. With n = ‖F T‖∞ the missing part of Φ is bounded entry-wise by n³ eⁿ / 6 and
    // that of Q_d by ‖Q_c‖∞ T (2n)² e²ⁿ / 6 (the tail of the exponential series, since
    // ‖Q_{k+1}‖ ≤ 2 ‖F‖ ‖Q_k‖; common practice bounds). The errors must also shrink as T³
    // (halving T divides them by 8, within [6, 10] for the next terms' share), which a
    // first-order form (T² scaling) or a wrong coefficient would fail.
    let (f, g, psd, qc) = manoeuvre_model(StrapdownConfig::default());
    let inf_norm = |m: &SMatrix<f64, 15, 15>| (0..15).map(|i| m.row(i).iter().map(|x| x.abs()).sum::<f64>()).fold(0.0, f64::max);
    let mut previous: Option<(f64, f64)> = None;
    for t in [0.04, 0.02, 0.01] {
        let (phi2, q2) = inertial::discretise_second_order(&f, &g, &psd, t).unwrap();
        let (phi, qd) = discretise(&f, &g, &psd, t).unwrap();
        let n = inf_norm(&f) * t;
        let phi_bound = n.powi(3) * n.exp() / 6.0;
        let q_bound = inf_norm(&qc) * t * (2.0 * n).powi(2) * (2.0 * n).exp() / 6.0;
        let (dphi, dq) = ((phi2 - phi).abs().max(), (q2 - qd).abs().max());
        assert!(dphi <= phi_bound, "T = {t}: Φ error {dphi:e} above {phi_bound:e}");
        assert!(dq <= q_bound, "T = {t}: Q_d error {dq:e} above {q_bound:e}");
        assert_eq!(q2, q2.transpose(), "Q_d is symmetric to the bit");
        if let Some((p_phi, p_q)) = previous {
            for (ratio, what) in [(p_phi / dphi, "Φ"), (p_q / dq, "Q_d")] {
                assert!((6.0..=10.0).contains(&ratio), "{what}: halving T divided the error by {ratio}, not about 8");
            }
        }
        previous = Some((dphi, dq));
    }
}
