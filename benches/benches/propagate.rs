//! A 60 s free fall with drag at rtol 1e-10 (the propagation issue's benchmark), in a site's
//! NED frame from a frame graph: the built-in drag, and the same drag as a closure. Prints the
//! steps and right-hand-side evaluations once; criterion reports the time per run (divide by
//! the steps for the time per step). The budget run (30-number state with the variational
//! equations) is measured beside it in the same run.
//!
//! Run with `cargo bench -p rotaframe-benches --bench propagate`.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use rotaframe::earth::{Geodetic, WGS84};
use rotaframe::graph::{EarthRotation, FrameGraph, LocalAxes, Site};
use rotaframe::nalgebra::Vector3;
use rotaframe::propagate::{self, AirDensity, Drag, Settings};

type NoEvent = fn(f64, &Vector3<f64>, &Vector3<f64>) -> rotaframe::Result<f64>;

fn benches(c: &mut Criterion) {
    let mut g = FrameGraph::new("inertial", true);
    g.add_earth("ecef", "inertial", EarthRotation::with_angle(WGS84, 0.0).unwrap()).unwrap();
    let pad =
        g.add_site("pad", "ecef", Site::new(WGS84, Geodetic::from_degrees(45.0, 0.0, 0.0), LocalAxes::Ned).unwrap()).unwrap();
    let drag =
        Drag::new(50.0, AirDensity::Exponential { at_origin: 1.225, scale_height: 8500.0, up: -Vector3::z() }, Vector3::zeros())
            .unwrap();
    let settings = Settings::default();
    let (r0, v0) = (Vector3::new(0.0, 0.0, -4000.0), Vector3::new(40.0, 0.0, 0.0));
    let run = |budget: bool| {
        let mut source = g.motion_source(0, pad).unwrap();
        let frame = |t: f64| source.at(t).map_err(|_| rotaframe::Error::Invalid { quantity: "frame", reason: "graph" });
        let force = |_: f64, r: &Vector3<f64>, v: &Vector3<f64>| Ok(drag.acceleration(r, v));
        propagate::propagate(&settings, frame, force, None::<NoEvent>, 0.0, 60.0, black_box(r0), v0, budget, |_| Ok(())).unwrap()
    };
    let plain = run(false);
    let with_budget = run(true);
    eprintln!(
        "60 s fall with drag: {} steps, {} evaluations ({} steps with the budget); end {:?} m",
        plain.steps,
        plain.evaluations,
        with_budget.steps,
        plain.position.as_slice()
    );
    let mut group = c.benchmark_group("fall_with_drag_60s");
    group.bench_function("built_in_drag", |b| b.iter(|| black_box(run(false))));
    group.bench_function("with_budget", |b| b.iter(|| black_box(run(true))));
    group.finish();
}

criterion_group!(propagate_benches, benches);
criterion_main!(propagate_benches);
