//! Free-body propagation in moving frames against physics with known answers: the same motion
//! propagated in the inertial frame, the Jacobi integral of a rotating frame, the eastward
//! deflection of a dropped body, inertial oscillations, and the deflection budget against
//! runs with and without each term. Also the integrator's order and dense output.

use nalgebra::Vector3;
use rotaframe::earth::{Geodetic, WGS84, earth_motion, gravity_ecef};
use rotaframe::graph::{LocalAxes, Site};
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra;
use rotaframe::propagate::{
    self, ApparentTerms, DenseStep, Gravitation, Motion, Outcome, Settings, Tolerances, dop853, map_from_inertial,
};

type NoEvent = fn(f64, &Vector3<f64>, &Vector3<f64>) -> rotaframe::Result<f64>;

fn no_force(_: f64, _: &Vector3<f64>, _: &Vector3<f64>) -> rotaframe::Result<Vector3<f64>> {
    Ok(Vector3::zeros())
}

fn run(
    settings: &Settings,
    frame: impl FnMut(f64) -> rotaframe::Result<Motion>,
    t1: f64,
    r: Vector3<f64>,
    v: Vector3<f64>,
) -> Outcome {
    propagate::propagate(settings, frame, no_force, None::<NoEvent>, 0.0, t1, r, v, false, |_| Ok(())).unwrap()
}

#[test]
fn dop853_reaches_the_analytic_oscillator_and_its_error_falls_with_the_tolerance() {
    // y'' = −y from (1, 0): cos t, −sin t (any ODE text). At rtol 1e-12 over 10 periods the
    // state is within 1e-10; loosening the tolerance by 10⁴ raises the error (order 8: about
    // 10⁴ too, at least 100).
    let f = |_: f64, y: &[f64; 2]| Ok([y[1], -y[0]]);
    let end = 20.0 * std::f64::consts::PI;
    let error = |rtol: f64| {
        let tol = Tolerances { rtol, atol: rtol * 1e-3, ..Tolerances::default() };
        let s = dop853::integrate(f, 0.0, [1.0, 0.0], end, &tol, |_| Ok(dop853::Control::Continue)).unwrap();
        ((s.y[0] - end.cos()).abs() + (s.y[1] + end.sin()).abs(), s.accepted)
    };
    let (tight, steps_tight) = error(1e-12);
    let (loose, steps_loose) = error(1e-8);
    println!("error {tight:e} in {steps_tight} steps at 1e-12, {loose:e} in {steps_loose} steps at 1e-8");
    assert!(tight < 1e-10 && loose > 100.0 * tight && loose < 1e-6);
    // Eighth order: 10⁴ tighter costs about 10^(4/8) ≈ 3.2 times the steps.
    let ratio = steps_tight as f64 / steps_loose as f64;
    assert!((2.0..5.0).contains(&ratio), "step ratio {ratio}");
}

#[test]
fn the_dense_output_is_continuous_and_accurate_inside_steps() {
    let f = |_: f64, y: &[f64; 2]| Ok([y[1], -y[0]]);
    let mut worst: f64 = 0.0;
    let tol = Tolerances { rtol: 1e-11, atol: 1e-14, ..Tolerances::default() };
    dop853::integrate(f, 0.0, [1.0, 0.0], 10.0, &tol, |step: &DenseStep<2>| {
        // Ends: the dense output reproduces the step's states (rounding of a 7-term Horner sum).
        assert!((step.at(step.t0)[0] - step.y0[0]).abs() < 1e-15 && (step.at(step.t1)[0] - step.y1[0]).abs() < 1e-14);
        for k in 1..8 {
            let t = step.t0 + (step.t1 - step.t0) * k as f64 / 8.0;
            worst = worst.max((step.at(t)[0] - t.cos()).abs());
        }
        Ok(dop853::Control::Continue)
    })
    .unwrap();
    // The 7th-order interpolant is as good as the steps (tolerance 1e-11 plus a little).
    assert!(worst < 1e-10, "dense output error {worst:e}");
}

/// ECEF relative to the inertial frame.
fn earth(t: f64) -> rotaframe::Result<Motion> {
    Ok(earth_motion(&WGS84, t, 0.0)?.erase_frames())
}

#[test]
fn a_flight_propagated_in_ecef_agrees_with_newton_in_the_inertial_frame() {
    // A 10-minute ballistic flight from 45° N: the rotating-frame run (with Coriolis,
    // centrifugal and translational terms) mapped to inertial space must agree with the plain
    // Newtonian run there (the definition of apparent accelerations; Goldstein, Classical
    // Mechanics, 3rd ed., §4.10). Goal: 1e-9 relative.
    let settings = Settings::default();
    let r0 = rotaframe::earth::geodetic_to_ecef(&WGS84, &Geodetic::from_degrees(45.0, 10.0, 1000.0)).unwrap();
    let v0 = Vector3::new(-900.0, 1200.0, 2500.0);
    let rotating = run(&settings, earth, 600.0, r0, v0);
    let start = earth(0.0).unwrap().map_point(&rotaframe::frames::PointKinematics::new(r0, v0, Vector3::zeros()));
    let inertial = run(&settings, |_| Ok(Motion::identity()), 600.0, start.position, start.velocity);
    let (r, v) = map_from_inertial(&earth(600.0).unwrap(), &inertial.position, &inertial.velocity);
    let rel = (r - rotating.position).norm() / r.norm();
    println!("10-minute flight: {rel:e} relative, {} steps", rotating.steps);
    assert!(rel < 1e-9 && (v - rotating.velocity).norm() / v.norm() < 1e-9);
}

#[test]
fn ten_turns_of_a_rate_table_agree_with_a_straight_line_in_the_laboratory() {
    // A free body seen from a table turning at 1 rev/s: in the (inertial) laboratory it moves
    // in a straight line. Goal: 1e-9 relative after 10 turns.
    let w = 2.0 * std::f64::consts::PI;
    let settings = Settings { gravitation: Gravitation::None, ..Settings::default() };
    let table = |t: f64| FrameMotion::spin(Vector3::z(), w, t);
    let (r0, v0) = (Vector3::new(0.3, 0.0, 0.05), Vector3::new(0.0, 0.0, 0.02));
    let out = run(&settings, table, 10.0, r0, v0);
    let start = table(0.0).unwrap().map_point(&rotaframe::frames::PointKinematics::new(r0, v0, Vector3::zeros()));
    let straight = start.position + start.velocity * 10.0;
    let (r, _) = map_from_inertial(&table(10.0).unwrap(), &straight, &start.velocity);
    let rel = (r - out.position).norm() / r.norm();
    println!("rate table, 10 turns: {rel:e} relative in {} steps", out.steps);
    assert!(rel < 1e-9);
}

#[test]
fn the_jacobi_integral_is_conserved_in_a_uniformly_rotating_frame() {
    // E = ½|v|² − ½|ω × r|² is constant for free motion seen from a frame turning at constant
    // ω (Goldstein, Classical Mechanics, 3rd ed., §3.12; Landau and Lifshitz, Mechanics, §39).
    let w = Vector3::new(0.0, 0.3, 1.2);
    let settings = Settings { gravitation: Gravitation::None, ..Settings::default() };
    let frame = |t: f64| FrameMotion::spin(w, w.norm(), t);
    let energy = |r: &Vector3<f64>, v: &Vector3<f64>| 0.5 * v.norm_squared() - 0.5 * w.cross(r).norm_squared();
    let (r0, v0) = (Vector3::new(2.0, -1.0, 0.5), Vector3::new(0.3, 0.8, -0.2));
    let e0 = energy(&r0, &v0);
    let mut worst: f64 = 0.0;
    propagate::propagate(&settings, frame, no_force, None::<NoEvent>, 0.0, 60.0, r0, v0, false, |step| {
        let (r, v) = (Vector3::new(step.y1[0], step.y1[1], step.y1[2]), Vector3::new(step.y1[3], step.y1[4], step.y1[5]));
        worst = worst.max((energy(&r, &v) - e0).abs() / e0.abs());
        Ok(())
    })
    .unwrap();
    println!("Jacobi integral drift {worst:e}");
    // Integration tolerance 1e-10 relative per step, accumulated over ~1e3 steps.
    assert!(worst < 1e-8);
}

/// The NED frame of a site on the ellipsoid, relative to the inertial frame.
fn site_frame(lat_deg: f64) -> impl Fn(f64) -> rotaframe::Result<Motion> {
    let site = Site::new(WGS84, Geodetic::from_degrees(lat_deg, 0.0, 0.0), LocalAxes::Ned).unwrap().motion();
    move |t| Ok(earth(t)?.then(&site))
}

/// Drops a body from rest `height` above a site's origin (J₂ gravitation, whose effective
/// gravity is the plumb line within a few µrad) until it reaches the site's horizontal plane.
fn drop(height: f64, lat_deg: f64, apparent: ApparentTerms) -> Outcome {
    let settings = Settings { gravitation: Gravitation::J2, apparent, ..Settings::default() };
    let ground = |_: f64, r: &Vector3<f64>, _: &Vector3<f64>| Ok(r.z);
    propagate::propagate(
        &settings,
        site_frame(lat_deg),
        no_force,
        Some(ground),
        0.0,
        100.0,
        Vector3::new(0.0, 0.0, -height),
        Vector3::zeros(),
        true,
        |_| Ok(()),
    )
    .unwrap()
}

#[test]
fn a_dropped_body_lands_east_by_a_third_of_omega_g_t_cubed_cos_latitude() {
    // The classical first-order eastward deflection x = (1/3) Ω g t³ cos φ (Gauss 1803,
    // Laplace 1803; Kibble and Berkshire, Classical Mechanics, 5th ed., §5.4), to 1 %.
    let omega = WGS84.rotation_rate();
    for height in [100.0, 1000.0] {
        let out = drop(height, 45.0, ApparentTerms::ALL);
        let t = out.event_time.expect("lands");
        let g = 2.0 * height / (t * t);
        let expected = omega * g * t.powi(3) * 45f64.to_radians().cos() / 3.0;
        println!(
            "drop {height} m: fall {t:.4} s, east {:.5} m (classical {expected:.5} m), north {:.3e} m",
            out.position.y, out.position.x
        );
        assert!((out.position.y / expected - 1.0).abs() < 0.01, "east {} vs {expected}", out.position.y);
        // Coriolis makes the deflection: the budget's Coriolis part holds nearly all of it.
        let b = out.budget.unwrap();
        assert!((b.coriolis[0].y / out.position.y - 1.0).abs() < 0.01);
    }
}

#[test]
fn the_second_order_deflection_of_a_dropped_body_is_towards_the_equator() {
    // Relative to the plumb line at the release point (gravity, J₂ plus centrifugal), a body
    // dropped in the northern hemisphere lands slightly south of the plumb point, and north in
    // the southern hemisphere (second-order Coriolis deflection; common practice).
    for (lat, sign) in [(45.0, -1.0), (-45.0, 1.0)] {
        let out = drop(1000.0, lat, ApparentTerms::ALL);
        let site = Site::new(WGS84, Geodetic::from_degrees(lat, 0.0, 0.0), LocalAxes::Ned).unwrap().motion();
        let release = site.map_point(&rotaframe::frames::PointKinematics::at_rest(Vector3::new(0.0, 0.0, -1000.0)));
        let plumb = site.rotation().inverse() * gravity_ecef(&WGS84, &release.position).unwrap().normalize();
        // Where the plumb line from the release point meets the ground plane z = 0.
        let landing = Vector3::new(0.0, 0.0, -1000.0) + plumb * (1000.0 / plumb.z);
        let north = out.position.x - landing.x;
        println!("latitude {lat}: lands {north:.3e} m north of the plumb point");
        assert!(north * sign > 0.0, "equatorward deflection at {lat}°: {north:e}");
    }
}

#[test]
fn horizontal_free_motion_on_an_f_plane_circles_with_the_inertial_period() {
    // With the Coriolis term alone (a frame turning at f/2 about the vertical, its
    // centrifugal term balanced by a force, as a level geopotential does), motion at speed v
    // circles with radius v/f and period 2π/f (Holton, An Introduction to Dynamic Meteorology,
    // 4th ed., §3.2.3; 16.92 h at 45° N per the AMS Glossary).
    let f = 2.0 * WGS84.rotation_rate() * 45f64.to_radians().sin();
    let w = Vector3::new(0.0, 0.0, 0.5 * f);
    let period = 2.0 * std::f64::consts::PI / f;
    let settings = Settings { gravitation: Gravitation::None, ..Settings::default() };
    let frame = move |t: f64| FrameMotion::spin(w, w.norm(), t);
    let balance = move |_: f64, r: &Vector3<f64>, _: &Vector3<f64>| Ok(w.cross(&w.cross(r)));
    let v0 = Vector3::new(0.0, 10.0, 0.0);
    let mut far: f64 = 0.0;
    let out =
        propagate::propagate(&settings, frame, balance, None::<NoEvent>, 0.0, period, Vector3::zeros(), v0, false, |step| {
            for k in 0..=50 {
                let y = step.at(step.t0 + (step.t1 - step.t0) * f64::from(k) / 50.0);
                far = far.max(Vector3::new(y[0], y[1], 0.0).norm());
            }
            Ok(())
        })
        .unwrap();
    println!(
        "period {:.3} h: back within {:.3e} m; widest {far:.2} m (diameter 2v/f = {:.2} m)",
        period / 3600.0,
        out.position.norm(),
        2.0 * 10.0 / f
    );
    assert!((period / 3600.0 - 16.92).abs() < 0.01);
    assert!(out.position.norm() < 1e-3 * 10.0 / f, "returns to the start after one period");
    assert!((far / (2.0 * 10.0 / f) - 1.0).abs() < 1e-3, "diameter 2 v/f");
}

#[test]
fn the_deflection_budget_agrees_with_runs_without_each_term_and_sums_to_the_total() {
    // A stage falling back from 30 km with a horizontal speed, seen from a site's NED frame for
    // 60 s: each term's first-order displacement must match (full run − run without it) to
    // 1 %, and their sum the difference to a run with no apparent term, up to a second-order
    // remainder.
    let settings = Settings { gravitation: Gravitation::J2, ..Settings::default() };
    let (r0, v0) = (Vector3::new(2000.0, -500.0, -30_000.0), Vector3::new(400.0, 250.0, 300.0));
    let with = |apparent: ApparentTerms, budget: bool| {
        let s = Settings { apparent, ..settings };
        propagate::propagate(&s, site_frame(60.0), no_force, None::<NoEvent>, 0.0, 60.0, r0, v0, budget, |_| Ok(())).unwrap()
    };
    let full = with(ApparentTerms::ALL, true);
    let b = full.budget.unwrap();
    let cases = [
        ("translational", b.translational[0], ApparentTerms { translational: false, ..ApparentTerms::ALL }),
        ("coriolis", b.coriolis[0], ApparentTerms { coriolis: false, ..ApparentTerms::ALL }),
        ("centrifugal", b.centrifugal[0], ApparentTerms { centrifugal: false, ..ApparentTerms::ALL }),
    ];
    for (name, first_order, without) in cases {
        let difference = full.position - with(without, false).position;
        println!("{name}: budget {first_order:?} m, full − without {difference:?} m");
        assert!((first_order - difference).norm() < 0.01 * difference.norm(), "{name}");
    }
    // A site on the rotating Earth turns at a constant rate: no Euler term.
    assert!(b.euler[0].norm() < 1e-9);
    let total = full.position - with(ApparentTerms::NONE, false).position;
    let remainder = total - b.total_displacement();
    println!("all terms: {total:?} m, sum of the budget {:?} m, second-order remainder {remainder:?} m", b.total_displacement());
    assert!(remainder.norm() < 0.01 * total.norm());
}

#[test]
fn step_limits_bad_forces_and_empty_spans_are_clear_errors() {
    let settings = Settings { tolerances: Tolerances { max_steps: 5, ..Tolerances::default() }, ..Settings::default() };
    let r0 = rotaframe::earth::geodetic_to_ecef(&WGS84, &Geodetic::from_degrees(10.0, 20.0, 0.0)).unwrap();
    let e =
        propagate::propagate(&settings, earth, no_force, None::<NoEvent>, 0.0, 3600.0, r0, Vector3::zeros(), false, |_| Ok(()))
            .unwrap_err();
    assert_eq!(e.quantity(), "max_steps");
    let bad = |_: f64, _: &Vector3<f64>, _: &Vector3<f64>| Ok(Vector3::new(f64::NAN, 0.0, 0.0));
    let e =
        propagate::propagate(&Settings::default(), earth, bad, None::<NoEvent>, 0.0, 10.0, r0, Vector3::zeros(), false, |_| {
            Ok(())
        })
        .unwrap_err();
    assert_eq!(e.to_string(), "`force` must be finite, got NaN or infinity");
    let e = propagate::propagate(
        &Settings::default(),
        earth,
        no_force,
        None::<NoEvent>,
        5.0,
        5.0,
        r0,
        Vector3::zeros(),
        false,
        |_| Ok(()),
    )
    .unwrap_err();
    assert_eq!(e.quantity(), "t_span");
}

#[test]
fn the_euler_budget_of_a_table_spinning_up_agrees_with_a_run_without_it() {
    // A table spun up at 2 rad/s² from rest, a body sliding freely across it for 1.5 s (no
    // gravity): the Euler term's first-order displacement matches (full − without Euler) to
    // 1 % (the tolerance of the budget check).
    let settings = Settings { gravitation: Gravitation::None, ..Settings::default() };
    let table = |t: f64| FrameMotion::about_axis(Vector3::z(), t * t, 2.0 * t, 2.0);
    let (r0, v0) = (Vector3::new(0.4, 0.0, 0.0), Vector3::new(0.0, 0.05, 0.0));
    let with = |apparent: ApparentTerms, budget: bool| {
        let s = Settings { apparent, ..settings };
        propagate::propagate(&s, table, no_force, None::<NoEvent>, 0.0, 0.2, r0, v0, budget, |_| Ok(())).unwrap()
    };
    let full = with(ApparentTerms::ALL, true);
    let euler = full.budget.unwrap().euler[0];
    let difference = full.position - with(ApparentTerms { euler: false, ..ApparentTerms::ALL }, false).position;
    println!("euler: budget {euler:?} m, full − without {difference:?} m");
    assert!(difference.norm() > 1e-4, "the term matters in this case");
    assert!((euler - difference).norm() < 0.01 * difference.norm());
}

#[test]
fn a_fall_with_quadratic_drag_follows_the_tanh_law_to_the_terminal_speed() {
    // Vertical fall from rest under uniform g with quadratic drag in still air of constant
    // density: v(t) = v_t tanh(g t / v_t), v_t = √(2 β g / ρ) (Taylor, Classical Mechanics,
    // 2005, §2.4; from memory). Goal: 1e-8 relative at every step (the run's tolerance is
    // 1e-10 per step).
    let (beta, rho, g) = (15.0, 1.225, 9.80665);
    let drag = propagate::Drag::new(beta, propagate::AirDensity::Constant(rho), Vector3::zeros()).unwrap();
    let settings = Settings { gravitation: Gravitation::None, ..Settings::default() };
    let force = |_: f64, r: &Vector3<f64>, v: &Vector3<f64>| Ok(Vector3::new(0.0, 0.0, g) + drag.acceleration(r, v));
    let terminal = (2.0 * beta * g / rho).sqrt();
    let mut worst: f64 = 0.0;
    let out = propagate::propagate(
        &settings,
        |_| Ok(Motion::identity()),
        force,
        None::<NoEvent>,
        0.0,
        20.0,
        Vector3::zeros(),
        Vector3::zeros(),
        false,
        |s| {
            worst = worst.max((s.y1[5] / (terminal * (g * s.t1 / terminal).tanh()) - 1.0).abs());
            Ok(())
        },
    )
    .unwrap();
    println!("terminal {terminal:.4} m/s; after 20 s {:.6} m/s; worst relative error {worst:e}", out.velocity.z);
    assert!(worst < 1e-8);
    // An exponential atmosphere: e-fold per scale height along `up`.
    let thin = propagate::Drag::new(
        beta,
        propagate::AirDensity::Exponential { at_origin: rho, scale_height: 8500.0, up: Vector3::new(0.0, 0.0, -2.0) },
        Vector3::zeros(),
    )
    .unwrap();
    assert!((thin.density_at(&Vector3::new(0.0, 0.0, -8500.0)) - rho / std::f64::consts::E).abs() < 1e-15);
    // Wind: no drag on a body moving with the air.
    let windy = propagate::Drag::new(beta, propagate::AirDensity::Constant(rho), Vector3::new(5.0, 0.0, 0.0)).unwrap();
    assert_eq!(windy.acceleration(&Vector3::zeros(), &Vector3::new(5.0, 0.0, 0.0)), Vector3::zeros());
    assert_eq!(
        propagate::Drag::new(0.0, propagate::AirDensity::Constant(rho), Vector3::zeros()).unwrap_err().quantity(),
        "ballistic_coefficient"
    );
    assert_eq!(
        propagate::Drag::new(1.0, propagate::AirDensity::Constant(-1.0), Vector3::zeros()).unwrap_err().quantity(),
        "density"
    );
}

#[test]
fn a_graph_frame_propagates_as_its_hand_built_motion_and_stops_at_a_height() {
    // The graph's site frame (Earth edge + site edge) is the hand-built site motion, so both
    // runs over the same span agree to rounding (1e-12 relative after 8 s). A drop from 500 m above the
    // ellipsoid stops where the height crosses 0, located on the dense output: the height of
    // the stopped state is 0 to the 1e-9 s location times the fall speed (~1e-7 m).
    use rotaframe::graph::{EarthRotation, FrameGraph};
    let mut g = FrameGraph::new("inertial", true);
    let ecef = g.add_earth("ecef", "inertial", EarthRotation::with_angle(WGS84, 0.0).unwrap()).unwrap();
    let site = Site::new(WGS84, Geodetic::from_degrees(30.0, 0.0, 0.0), LocalAxes::Ned).unwrap();
    let pad = g.add_site("pad", "ecef", site).unwrap();
    let settings = Settings { gravitation: Gravitation::J2, ..Settings::default() };
    let (r0, v0) = (Vector3::new(0.0, 0.0, -500.0), Vector3::new(3.0, 0.0, 0.0));
    let mut source = g.motion_source(0, pad).unwrap();
    let mut down_to_ecef = g.motion_source(ecef, pad).unwrap();
    let model = WGS84;
    let height = |_: f64, r: &Vector3<f64>, _: &Vector3<f64>| propagate::height_in(&model, &down_to_ecef.at(0.0).unwrap(), r);
    let graph_run = propagate::propagate(
        &settings,
        |t| Ok(source.at(t).unwrap()),
        no_force,
        None::<NoEvent>,
        0.0,
        8.0,
        r0,
        v0,
        false,
        |_| Ok(()),
    )
    .unwrap();
    let by_hand =
        propagate::propagate(&settings, site_frame(30.0), no_force, None::<NoEvent>, 0.0, 8.0, r0, v0, false, |_| Ok(()))
            .unwrap();
    let rel = (graph_run.position - by_hand.position).norm() / by_hand.position.norm();
    let out = propagate::propagate(
        &settings,
        |t| Ok(source.at(t).unwrap()),
        no_force,
        Some(height),
        0.0,
        60.0,
        r0,
        v0,
        false,
        |_| Ok(()),
    )
    .unwrap();
    let landed = propagate::height_in(&model, &g.motion("ecef", "pad", 0.0).unwrap(), &out.position).unwrap();
    println!("stopped at {:.9} s, height {landed:e} m; graph vs hand {rel:e}", out.time);
    assert!(out.event_time.is_some() && landed.abs() < 1e-6);
    assert!((out.time / (1000.0 / 9.79f64).sqrt() - 1.0).abs() < 0.01, "about √(2h/g)");
    assert!(rel < 1e-12);
}

#[test]
fn at_an_event_the_budget_moves_the_landing_point_as_runs_without_each_term_do() {
    // A body thrown from 20 km at 200 m/s east and 80 m/s up, stopped at the site's plane:
    // without a term it lands at another time, so the budget includes the event-time shift.
    // Each term's first-order landing displacement matches (landing with all − landing
    // without it, each run stopped by its own event) to 1 % (the budget tolerance).
    let settings = Settings { gravitation: Gravitation::J2, ..Settings::default() };
    let (r0, v0) = (Vector3::new(0.0, 0.0, -20_000.0), Vector3::new(0.0, 200.0, -80.0));
    let ground = |_: f64, r: &Vector3<f64>, _: &Vector3<f64>| Ok(r.z);
    let land = |apparent: ApparentTerms, budget: bool| {
        let s = Settings { apparent, ..settings };
        propagate::propagate(&s, site_frame(35.0), no_force, Some(ground), 0.0, 600.0, r0, v0, budget, |_| Ok(())).unwrap()
    };
    let full = land(ApparentTerms::ALL, true);
    let b = full.budget.unwrap();
    for (name, first_order, without) in [
        ("translational", b.translational[0], ApparentTerms { translational: false, ..ApparentTerms::ALL }),
        ("coriolis", b.coriolis[0], ApparentTerms { coriolis: false, ..ApparentTerms::ALL }),
    ] {
        let other = land(without, false);
        let difference = full.position - other.position;
        println!(
            "{name}: budget {first_order:?} m, landing difference {difference:?} m (lands {:.3} s vs {:.3} s)",
            full.time, other.time
        );
        assert!(first_order.z.abs() < 1e-6, "on the ground plane: {}", first_order.z);
        assert!((first_order - difference).norm() < 0.01 * difference.norm(), "{name}");
    }
}
