//! Frame graphs: invariance of the answer under re-rooting, composition and inversion of
//! queries, agreement with hand-written chains, sampled edges against analytic motions (with
//! the order of the interpolation error measured), the TOML round trip, and the errors.
//!
//! Reference for the algebra: the composition and inverse of frame motions (the transport
//! theorem; Goldstein, *Classical Mechanics*, 3rd ed., ch. 4), which the graph must reproduce
//! through any path of a tree.

use nalgebra::{UnitQuaternion, Vector3};
use proptest::prelude::*;
use rotaframe::earth::{Geodetic, WGS84, earth_motion};
use rotaframe::frames::{AnyFrame, Ecef, Eci, Ned};
use rotaframe::graph::{EarthRotation, Fixed, FrameGraph, GraphError, LocalAxes, Motion, SampledEdge, Site, Spin, StaticEdge};
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra;
use rotaframe_tests::{config, unit_quaternion, vector};

/// A random static edge: a mount or a spin with laboratory-scale parameters.
fn static_edge() -> impl Strategy<Value = StaticEdge> {
    prop_oneof![
        (unit_quaternion(), vector(10.0)).prop_map(|(q, p)| StaticEdge::Fixed(Fixed::new(q, p).unwrap())),
        (rotaframe_tests::unit_vector(), -5.0..5.0f64, -3.0..3.0f64, -0.5..0.5f64)
            .prop_map(|(axis, rate, angle, accel)| StaticEdge::Spin(Spin::new(axis, rate, angle, accel).unwrap())),
    ]
}

/// A random tree of up to 8 frames: frame k's parent is one of the frames before it.
fn tree() -> impl Strategy<Value = Vec<(usize, StaticEdge)>> {
    (2..8usize).prop_flat_map(|n| {
        let parents: Vec<BoxedStrategy<usize>> = (1..n).map(|k| (0..k).boxed()).collect();
        (parents, prop::collection::vec(static_edge(), n - 1)).prop_map(|(p, e)| p.into_iter().zip(e).collect())
    })
}

fn name(k: usize) -> String {
    format!("f{k}")
}

fn build(edges: &[(usize, StaticEdge)]) -> FrameGraph {
    let mut g = FrameGraph::new("f0", true);
    for (k, (parent, edge)) in edges.iter().enumerate() {
        g.add_static(&name(k + 1), &name(*parent), *edge).unwrap();
    }
    g
}

/// The same frames hung from `new_root` instead: the edges between the new and the old root
/// are reversed (each now the inverse of the original, as a function edge).
fn rerooted(edges: &[(usize, StaticEdge)], new_root: usize) -> FrameGraph {
    let parent_of = |k: usize| if k == 0 { None } else { Some(edges[k - 1].0) };
    let mut on_path = vec![new_root];
    while let Some(p) = parent_of(*on_path.last().unwrap()) {
        on_path.push(p);
    }
    let mut g = FrameGraph::new(&name(new_root), true);
    let mut added = vec![false; edges.len() + 1];
    added[new_root] = true;
    // Reversed edges: old parent hangs from its old child.
    for w in on_path.windows(2) {
        let (child, parent) = (w[0], w[1]);
        let edge = edges[child - 1].1;
        g.add_function(&name(parent), &name(child), Box::new(move |t| Ok(edge.motion_at(t)?.inverse()))).unwrap();
        added[parent] = true;
    }
    // Everything else keeps its edge, added once its parent is in.
    while added.iter().any(|a| !a) {
        for k in 1..=edges.len() {
            let (parent, edge) = edges[k - 1];
            if !added[k] && added[parent] && !on_path.contains(&k) {
                g.add_static(&name(k), &name(parent), edge).unwrap();
                added[k] = true;
            }
        }
    }
    g
}

/// Relative tolerance of a few compositions and inverses of laboratory-scale motions: each
/// part is a sum of products, rounded at about 50 ε of its largest term per step; eight steps
/// compound that to ~1e-13, and 1e-11 leaves margin while any wrong sign is of order one.
const TREE_TOL: f64 = 1e-11;

proptest! {
    #![proptest_config(config())]

    #[test]
    fn the_motion_between_two_frames_does_not_depend_on_the_root(edges in tree(), picks in (0..64usize, 0..64usize, 0..64usize), t in -20.0..20.0f64) {
        let n = edges.len() + 1;
        let (a, b, root) = (picks.0 % n, picks.1 % n, picks.2 % n);
        let original = build(&edges);
        let other = rerooted(&edges, root);
        let m1 = original.motion(&name(a), &name(b), t).unwrap();
        let m2 = other.motion(&name(a), &name(b), t).unwrap();
        prop_assert!(approx::relative_eq!(m1, m2, epsilon = TREE_TOL * 100.0, max_relative = TREE_TOL), "{m1:?}\n{m2:?}");
    }

    #[test]
    fn queries_compose_and_invert(edges in tree(), picks in (0..64usize, 0..64usize, 0..64usize), t in -20.0..20.0f64) {
        let n = edges.len() + 1;
        let (a, b, c) = (name(picks.0 % n), name(picks.1 % n), name(picks.2 % n));
        let g = build(&edges);
        let ab = g.motion(&a, &b, t).unwrap();
        let bc = g.motion(&b, &c, t).unwrap();
        let ac = g.motion(&a, &c, t).unwrap();
        prop_assert!(approx::relative_eq!(ab.then(&bc), ac, epsilon = TREE_TOL * 100.0, max_relative = TREE_TOL));
        let ba = g.motion(&b, &a, t).unwrap();
        prop_assert!(approx::relative_eq!(ab, ba.inverse(), epsilon = TREE_TOL * 100.0, max_relative = TREE_TOL));
    }

    #[test]
    fn the_toml_round_trip_is_lossless(edges in tree(), t in -20.0..20.0f64) {
        let g = build(&edges);
        let text = g.to_toml();
        let back = FrameGraph::from_toml(&text).unwrap();
        prop_assert_eq!(back.to_toml(), text);
        let last = name(edges.len());
        prop_assert_eq!(back.motion("f0", &last, t).unwrap(), g.motion("f0", &last, t).unwrap());
    }
}

/// A launch-site chain: inertial → ECEF → site NED → turntable → sensor.
fn site_chain() -> (FrameGraph, EarthRotation, Site, Spin, Fixed) {
    let earth = EarthRotation::with_angle(WGS84, 1.25).unwrap();
    let site = Site::new(WGS84, Geodetic::from_degrees(-31.5, 115.9, 40.0), LocalAxes::Ned).unwrap();
    let spin = Spin::new(Vector3::new(0.1, 0.0, 1.0), 3.0, 0.4, 0.2).unwrap();
    let mount = Fixed::new(UnitQuaternion::from_euler_angles(0.01, -0.02, 1.5), Vector3::new(0.3, -0.1, 0.05)).unwrap();
    let mut g = FrameGraph::new("inertial", true);
    g.add_earth("ecef", "inertial", earth).unwrap();
    g.add_site("pad", "ecef", site).unwrap();
    g.add_spin("table", "pad", spin).unwrap();
    g.add_fixed("sensor", "table", mount).unwrap();
    (g, earth, site, spin, mount)
}

#[test]
fn a_chain_query_equals_the_hand_written_then_chain_bit_for_bit() {
    let (g, earth, site, spin, mount) = site_chain();
    for t in [0.0, 0.37, 1234.5, -60.0] {
        let by_hand: FrameMotion<Eci, AnyFrame> = earth_motion(&WGS84, t, earth.angle_at_epoch())
            .unwrap()
            .then(&site.motion().assume_frames::<Ecef, Ned>())
            .then(&spin.motion_at(t).unwrap().assume_frames::<Ned, AnyFrame>())
            .then(&mount.motion().assume_frames::<AnyFrame, AnyFrame>());
        assert_eq!(g.motion("inertial", "sensor", t).unwrap(), by_hand.erase_frames(), "t = {t}");
    }
}

#[test]
fn a_chain_ending_in_two_mounts_equals_the_hand_written_chain_to_a_few_ulps() {
    // The graph composes a trailing run of constant edges once (Path::fold): exact in real
    // arithmetic (composition is associative), so only the rounding differs. Bound: 4 ulps of
    // the unit quaternion and of each vector's scale below (one `then` rounds each component
    // to about an ulp of its largest term, and the regrouping moves two such roundings).
    let (mut g, earth, site, spin, mount) = site_chain();
    let tip = Fixed::new(UnitQuaternion::from_euler_angles(-0.3, 0.2, 0.1), Vector3::new(0.02, 0.4, -0.7)).unwrap();
    g.add_fixed("tip", "sensor", tip).unwrap();
    let mut worst = 0.0_f64;
    for t in [0.0, 0.37, 1234.5, -60.0, 86_400.0] {
        let by_hand = earth_motion(&WGS84, t, earth.angle_at_epoch())
            .unwrap()
            .erase_frames()
            .then(&site.motion())
            .then(&spin.motion_at(t).unwrap())
            .then(&mount.motion())
            .then(&tip.motion());
        let graph = g.motion("inertial", "tip", t).unwrap();
        let (a, b) = (graph.parts(), by_hand.parts());
        let q = (a.rotation.coords - b.rotation.coords).norm() / f64::EPSILON;
        worst = worst.max(q);
        assert!(q <= 4.0, "t = {t}: rotation differs by {q} ulps");
        // Each part rounds to ulps of the largest term of its composition formula, not of its
        // own norm (the transport terms ω×r, ω×(ω×r), ... nearly cancel in places).
        let (r, v, w) = (b.position.norm(), b.velocity.norm(), b.angular_velocity.norm());
        let scales = [
            r,
            v + w * r,
            b.acceleration.norm() + b.angular_acceleration.norm() * r + w * w * r + w * v,
            w,
            b.angular_acceleration.norm() + w * w,
        ];
        let pairs = [
            (a.position, b.position),
            (a.velocity, b.velocity),
            (a.acceleration, b.acceleration),
            (a.angular_velocity, b.angular_velocity),
            (a.angular_acceleration, b.angular_acceleration),
        ];
        for (k, ((x, y), scale)) in pairs.into_iter().zip(scales).enumerate() {
            let ulps = (x - y).norm() / (f64::EPSILON * scale.max(f64::MIN_POSITIVE));
            worst = worst.max(ulps);
            assert!(ulps <= 4.0, "t = {t}: part {k} differs by {ulps} ulps of its scale");
        }
    }
    println!("worst difference: {worst:.2} ulps");
}

#[test]
fn apparent_accelerations_in_a_frame_come_from_its_motion_relative_to_the_inertial_root() {
    let (g, ..) = site_chain();
    let (r, v) = (Vector3::new(0.2, 0.0, 0.0), Vector3::new(0.0, 0.5, 0.0));
    let terms = g.apparent_acceleration("table", 3.0, &r, &v).unwrap();
    let m = g.motion("inertial", "table", 3.0).unwrap();
    let expected = rotaframe::apparent::apparent_acceleration(
        &m.assume_frames::<Eci, AnyFrame>(),
        &rotaframe::frames::PointKinematics::new(r, v, Vector3::zeros()),
    );
    assert_eq!(terms.total, expected.total);
    let mut lab = FrameGraph::new("lab", false);
    lab.add_spin("table", "lab", Spin::new(Vector3::z(), 1.0, 0.0, 0.0).unwrap()).unwrap();
    assert!(matches!(lab.apparent_acceleration("table", 0.0, &r, &v), Err(GraphError::NotInertial { .. })));
}

/// A manoeuvring motion with known derivatives: a body on a circle of radius 20 m at 0.3 rad/s
/// while rising at 1 m/s, its axes turning about a tilted axis at 0.5 rad/s plus a wobble.
fn analytic(t: f64) -> Motion {
    let (w, rho) = (0.3_f64, 20.0);
    let (s, c) = (w * t).sin_cos();
    let position = Vector3::new(rho * c, rho * s, t);
    let velocity = Vector3::new(-rho * w * s, rho * w * c, 1.0);
    let acceleration = Vector3::new(-rho * w * w * c, -rho * w * w * s, 0.0);
    // Rotation angle θ(t) = 0.5 t + 0.2 sin t about a fixed unit axis.
    let axis = Vector3::new(1.0, 2.0, 2.0) / 3.0;
    let angle = 0.5 * t + 0.2 * t.sin();
    let rate = 0.5 + 0.2 * t.cos();
    let accel = -0.2 * t.sin();
    let spin = FrameMotion::<AnyFrame, AnyFrame>::about_axis(axis, angle, rate, accel).unwrap();
    FrameMotion::from_parts(rotaframe::motion::MotionParts { position, velocity, acceleration, ..spin.parts() }).unwrap()
}

/// Largest errors of a sampled edge through `analytic` at interval `dt`, midway between samples.
fn sampled_errors(dt: f64) -> [f64; 4] {
    let n = (20.0 / dt) as usize + 1;
    let times: Vec<f64> = (0..n).map(|k| k as f64 * dt).collect();
    let motions: Vec<Motion> = times.iter().map(|&t| analytic(t)).collect();
    let positions = motions.iter().map(|m| m.position().into()).collect();
    let attitudes = motions.iter().map(|m| rotaframe::rotation::quaternion_to_wxyz(&m.rotation())).collect();
    let mut g = FrameGraph::new("site", false);
    g.add_samples("vehicle", "site", SampledEdge::cartesian(times, positions, attitudes, None, None).unwrap()).unwrap();
    let mut worst = [0.0f64; 4];
    for k in 3..n - 4 {
        let t = (k as f64 + 0.5) * dt;
        let (got, want) = (g.motion("site", "vehicle", t).unwrap(), analytic(t));
        worst[0] = worst[0].max((got.velocity() - want.velocity()).norm());
        worst[1] = worst[1].max((got.acceleration() - want.acceleration()).norm());
        worst[2] = worst[2].max((got.angular_velocity() - want.angular_velocity()).norm());
        worst[3] = worst[3].max((got.angular_acceleration() - want.angular_acceleration()).norm());
    }
    worst
}

#[test]
fn a_sampled_edge_reproduces_an_analytic_manoeuvre_with_error_of_high_order() {
    // The knots' first derivatives are O(Δt⁶) and second derivatives O(Δt⁵) accurate
    // (seven-point Fornberg stencils; module docs of nav::recorded), and between knots a
    // quintic Hermite segment's second derivative carries its own O(Δt⁴) error (the
    // interpolation error of a quintic, h⁶ f⁽⁶⁾ in value; any numerical analysis text). Measured
    // here: ratios of about 63 (2⁶) for the velocities and 17–38 for the accelerations. Halving
    // the interval must cut the first by at least 32 (order 5, one order of margin) and the
    // second by at least 12 (order ≥ 3.6).
    let coarse = sampled_errors(0.2);
    let fine = sampled_errors(0.1);
    println!("errors at 0.2 s {coarse:?}, at 0.1 s {fine:?}");
    let ratios: Vec<f64> = coarse.iter().zip(&fine).map(|(c, f)| c / f).collect();
    println!("ratios {ratios:?}");
    assert!(ratios[0] > 32.0 && ratios[2] > 32.0, "first-derivative order: {ratios:?}");
    assert!(ratios[1] > 12.0 && ratios[3] > 12.0, "second-derivative order: {ratios:?}");
    // And at 10 Hz the motion is reproduced closely (bounds about twice the measured errors).
    assert!(fine[0] < 1e-6 && fine[2] < 1e-6, "{fine:?}");
}

#[test]
fn measured_rates_make_a_sampled_edge_more_accurate() {
    // Velocities and angular rates given with the samples replace the estimated first
    // derivatives: at 0.2 s the velocity error must drop (here by orders of magnitude).
    let dt = 0.2;
    let n = 101;
    let times: Vec<f64> = (0..n).map(|k| k as f64 * dt).collect();
    let m: Vec<Motion> = times.iter().map(|&t| analytic(t)).collect();
    let positions = m.iter().map(|m| m.position().into()).collect();
    let attitudes = m.iter().map(|m| rotaframe::rotation::quaternion_to_wxyz(&m.rotation())).collect();
    let velocities = m.iter().map(|m| m.velocity().into()).collect();
    let rates = m.iter().map(|m| m.angular_velocity_in_child().into()).collect();
    let mut g = FrameGraph::new("site", false);
    g.add_samples("vehicle", "site", SampledEdge::cartesian(times, positions, attitudes, Some(velocities), Some(rates)).unwrap())
        .unwrap();
    let mut worst: f64 = 0.0;
    for k in 3..n - 4 {
        let t = (k as f64 + 0.5) * dt;
        worst = worst.max((g.motion("site", "vehicle", t).unwrap().velocity() - analytic(t).velocity()).norm());
    }
    let estimated = sampled_errors(dt)[0];
    println!("velocity error with measured rates {worst:e}, estimated {estimated:e}");
    assert!(worst < estimated / 10.0);
}

#[test]
fn a_sampled_edge_refuses_times_outside_its_span_naming_frame_time_and_span() {
    let times = vec![0.0, 1.0, 2.0, 3.0];
    let edge = SampledEdge::cartesian(times, vec![[0.0; 3]; 4], vec![[1.0, 0.0, 0.0, 0.0]; 4], None, None).unwrap();
    let mut g = FrameGraph::new("site", false);
    g.add_samples("cart", "site", edge).unwrap();
    let e = g.motion("site", "cart", 3.5).unwrap_err();
    assert_eq!(e.to_string(), "frame \"cart\": `time` = 3.5 is outside [0, 3]");
}

#[test]
fn bad_samples_and_bad_graphs_get_clear_errors() {
    let q = vec![[1.0, 0.0, 0.0, 0.0]; 4];
    let e = SampledEdge::cartesian(vec![0.0, 1.0, 1.0, 2.0], vec![[0.0; 3]; 4], q.clone(), None, None).unwrap_err();
    assert_eq!((e.index, e.error.quantity()), (2, "time"));
    let e = SampledEdge::cartesian(vec![0.0, f64::NAN, 2.0, 3.0], vec![[0.0; 3]; 4], q.clone(), None, None).unwrap_err();
    assert_eq!((e.index, e.error.quantity()), (1, "time"));
    let mut bad_q = q.clone();
    bad_q[3] = [2.0, 0.0, 0.0, 0.0];
    let e = SampledEdge::cartesian(vec![0.0, 1.0, 2.0, 3.0], vec![[0.0; 3]; 4], bad_q, None, None).unwrap_err();
    assert_eq!((e.index, e.error.quantity()), (3, "attitude"));
    let mut g = FrameGraph::new("lab", true);
    let mount = Fixed::new(UnitQuaternion::identity(), Vector3::zeros()).unwrap();
    g.add_fixed("camera", "lab", mount).unwrap();
    assert!(matches!(g.add_fixed("camera", "lab", mount), Err(GraphError::DuplicateName { .. })));
    assert_eq!(g.motion("lab", "camra", 0.0).unwrap_err().to_string(), "no frame named \"camra\" (did you mean \"camera\"?)");
    // Geodetic samples need an Earth-fixed parent.
    let geo =
        SampledEdge::geodetic(&WGS84, vec![0.0, 1.0, 2.0], &[Geodetic::new(0.5, 0.1, 0.0); 3], &q[..3], None, None).unwrap();
    assert!(matches!(g.add_samples("truck", "camera", geo), Err(GraphError::NotEarthFixed { .. })));
}

#[test]
fn malformed_files_unknown_keys_and_wrong_types_give_their_line() {
    let cases = [
        ("root = \"lab\"\n[[frame]\n", "frame graph file, line 2:"),
        (
            "root = \"lab\"\n\n[[frame]]\nname = \"a\"\nparent = \"lab\"\nkind = \"spin\"\naxis = [0, 0, 1]\nrat = 2.0\n",
            "line 8: unknown field `rat`",
        ),
        (
            "root = \"lab\"\n[[frame]]\nname = \"a\"\nparent = \"lab\"\nkind = \"spin\"\naxis = [0, 0, 1]\nrate = \"fast\"\n",
            "line 7: key `rate`: invalid type: string \"fast\", expected f64",
        ),
        (
            "root = \"lab\"\n[[frame]]\nname = \"a\"\nparent = \"b\"\nkind = \"fixed\"\n[[frame]]\nname = \"b\"\nparent = \"a\"\nkind = \"fixed\"\n",
            "line 2: the parents of frames a → b → a form a loop",
        ),
        (
            "root = \"lab\"\n[[frame]]\nname = \"a\"\nparent = \"lba\"\nkind = \"fixed\"\n",
            "line 2: frame \"a\" names an unknown parent: no frame named \"lba\" (did you mean \"lab\"?)",
        ),
        (
            // An unknown parent at the top of a chain listed child first: named as unknown,
            // not as a loop among frames with empty names.
            "root = \"lab\"\n[[frame]]\nname = \"b\"\nparent = \"a\"\nkind = \"fixed\"\n[[frame]]\nname = \"a\"\nparent = \"nowhere\"\nkind = \"fixed\"\n",
            "line 6: frame \"a\" names an unknown parent: no frame named \"nowhere\"",
        ),
    ];
    for (text, expected) in cases {
        let e = FrameGraph::from_toml(text).unwrap_err().to_string();
        assert!(e.contains(expected), "{e:?} should contain {expected:?}");
    }
}

#[test]
fn frames_listed_before_their_parents_get_the_ids_of_repeated_passes_over_the_file() {
    // A pass over the file adds each frame whose parent is already in the graph (in file
    // order): here pass 1 adds a and c (c after its parent a), pass 2 adds b (listed before its
    // parent c) and d (after b), pass 3 adds e (listed before its parent d).
    let text = "root = \"lab\"\n\
        [[frame]]\nname = \"e\"\nparent = \"d\"\nkind = \"fixed\"\n\
        [[frame]]\nname = \"b\"\nparent = \"c\"\nkind = \"fixed\"\n\
        [[frame]]\nname = \"a\"\nparent = \"lab\"\nkind = \"fixed\"\n\
        [[frame]]\nname = \"d\"\nparent = \"b\"\nkind = \"fixed\"\n\
        [[frame]]\nname = \"c\"\nparent = \"a\"\nkind = \"fixed\"\n";
    let g = FrameGraph::from_toml(text).unwrap();
    assert_eq!(g.frames().collect::<Vec<_>>(), ["lab", "a", "c", "b", "d", "e"]);
}
