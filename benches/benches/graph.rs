//! Frame-graph queries against the same chain composed by hand, in the same run over the same
//! times.
//!
//! Run with `cargo bench -p rotaframe-benches --bench graph`.
//!
//! The chain has five edges of the static kinds: inertial → ECEF (Earth rotation) → a site's
//! NED frame → a turntable (spin) → an arm (fixed) → a sensor (fixed). `hand_written` evaluates
//! each edge's motion and composes them with `then` per time; `graph_batch` asks the graph for
//! all times at once (one path search); `graph_single` asks per time by name (a name lookup and
//! a path search per query). Goal: a query within 1.1× of the hand-written chain.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rotaframe::earth::{Geodetic, WGS84, earth_motion};
use rotaframe::graph::{EarthRotation, Fixed, FrameGraph, LocalAxes, Motion, Site, Spin};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};

const TIMES: usize = 1024;

fn benches(c: &mut Criterion) {
    let earth = EarthRotation::with_angle(WGS84, 0.3).unwrap();
    let site = Site::new(WGS84, Geodetic::from_degrees(47.4, 8.5, 420.0), LocalAxes::Ned).unwrap();
    let spin = Spin::new(Vector3::z(), 2.5, 0.1, 0.0).unwrap();
    let arm = Fixed::new(UnitQuaternion::from_euler_angles(0.0, 0.0, 0.3), Vector3::new(0.8, 0.0, 0.0)).unwrap();
    let sensor = Fixed::new(UnitQuaternion::from_euler_angles(0.01, 0.02, -1.2), Vector3::new(0.0, 0.05, -0.02)).unwrap();
    let mut g = FrameGraph::new("inertial", true);
    g.add_earth("ecef", "inertial", earth).unwrap();
    g.add_site("site", "ecef", site).unwrap();
    g.add_spin("table", "site", spin).unwrap();
    g.add_fixed("arm", "table", arm).unwrap();
    let sensor_id = g.add_fixed("sensor", "arm", sensor).unwrap();
    let times: Vec<f64> = (0..TIMES).map(|k| k as f64 * 0.01).collect();
    let mut out = vec![Motion::identity(); TIMES];

    let mut group = c.benchmark_group("five_edge_chain");
    group.throughput(Throughput::Elements(TIMES as u64));
    group.bench_function("hand_written", |b| {
        b.iter(|| {
            for (o, &t) in out.iter_mut().zip(&times) {
                let e = earth_motion(&WGS84, t, 0.3).unwrap().erase_frames();
                *o = e.then(&site.motion()).then(&spin.motion_at(t).unwrap()).then(&arm.motion()).then(&sensor.motion());
            }
            black_box(&out);
        });
    });
    group.bench_function("graph_batch", |b| {
        b.iter(|| {
            g.motions(0, sensor_id, black_box(&times), &mut out).unwrap();
            black_box(&out);
        });
    });
    group.bench_function("graph_single", |b| {
        b.iter(|| {
            for (o, &t) in out.iter_mut().zip(&times) {
                *o = g.motion("inertial", "sensor", black_box(t)).unwrap();
            }
            black_box(&out);
        });
    });
    group.finish();
}

criterion_group!(graph, benches);
criterion_main!(graph);
