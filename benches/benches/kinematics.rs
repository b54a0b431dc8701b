//! Frame-motion operations against hand-written nalgebra expressions of the same formulas,
//! measured in the same run over the same seeded inputs.
//!
//! Run with `cargo bench -p rotaframe-benches --bench kinematics`. Each group has a
//! `rotaframe` and a `hand_written` entry; the ratio of their times is the figure of merit.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rotaframe::apparent::{FrameDynamics, apparent_terms};
use rotaframe::frames::{AnyFrame, PointKinematics};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra::{Quaternion, UnitQuaternion, Vector3};
use rotaframe_tests::Seeded;

const N: usize = 1024;

/// The same state as a `FrameMotion`, held as plain nalgebra values for the hand-written code.
#[derive(Clone, Copy)]
struct Raw {
    q: UnitQuaternion<f64>,
    p: Vector3<f64>,
    v: Vector3<f64>,
    a: Vector3<f64>,
    w: Vector3<f64>,
    al: Vector3<f64>,
}

type Motion = FrameMotion<AnyFrame, AnyFrame>;

fn quaternion(rng: &mut Seeded) -> UnitQuaternion<f64> {
    UnitQuaternion::from_quaternion(Quaternion::new(
        rng.next_signed() + 2.0,
        rng.next_signed(),
        rng.next_signed(),
        rng.next_signed(),
    ))
}

fn inputs() -> (Vec<Motion>, Vec<Raw>, Vec<PointKinematics<AnyFrame>>) {
    let mut rng = Seeded(42);
    let mut motions = Vec::with_capacity(N);
    let mut raws = Vec::with_capacity(N);
    let mut points = Vec::with_capacity(N);
    for _ in 0..N {
        let raw = Raw {
            q: quaternion(&mut rng),
            p: rng.vector(1e4),
            v: rng.vector(1e2),
            a: rng.vector(10.0),
            w: rng.vector(1.0),
            al: rng.vector(0.1),
        };
        motions.push(
            FrameMotion::from_parts(MotionParts {
                rotation: raw.q,
                position: raw.p,
                velocity: raw.v,
                acceleration: raw.a,
                angular_velocity: raw.w,
                angular_acceleration: raw.al,
            })
            .unwrap(),
        );
        raws.push(raw);
        points.push(PointKinematics::new(rng.vector(10.0), rng.vector(1.0), rng.vector(0.1)));
    }
    (motions, raws, points)
}

#[inline(never)]
fn hand_map_point(m: &Raw, r: &Vector3<f64>, v: &Vector3<f64>, a: &Vector3<f64>) -> (Vector3<f64>, Vector3<f64>, Vector3<f64>) {
    let rot = m.q.to_rotation_matrix();
    let (rr, rv, ra) = (rot * r, rot * v, rot * a);
    let wr = m.w.cross(&rr);
    (m.p + rr, m.v + rv + wr, m.a + ra + 2.0 * m.w.cross(&rv) + m.al.cross(&rr) + m.w.cross(&wr))
}

#[inline(never)]
fn hand_compose(m1: &Raw, m2: &Raw) -> Raw {
    let rot = m1.q.to_rotation_matrix();
    let (p2, v2, a2, w2) = (rot * m2.p, rot * m2.v, rot * m2.a, rot * m2.w);
    let wp = m1.w.cross(&p2);
    Raw {
        q: m1.q * m2.q,
        p: m1.p + p2,
        v: m1.v + v2 + wp,
        a: m1.a + a2 + 2.0 * m1.w.cross(&v2) + m1.al.cross(&p2) + m1.w.cross(&wp),
        w: m1.w + w2,
        al: m1.al + rot * m2.al + m1.w.cross(&w2),
    }
}

#[inline(never)]
fn hand_inverse(m: &Raw) -> Raw {
    let qi = m.q.inverse();
    let rt = qi.to_rotation_matrix();
    let wp = m.w.cross(&m.p);
    Raw {
        q: qi,
        p: -(rt * m.p),
        v: rt * (wp - m.v),
        a: rt * (2.0 * m.w.cross(&m.v) + m.al.cross(&m.p) - m.w.cross(&wp) - m.a),
        w: -(rt * m.w),
        al: -(rt * m.al),
    }
}

#[inline(never)]
fn hand_apparent(
    w: &Vector3<f64>,
    al: &Vector3<f64>,
    a0: &Vector3<f64>,
    r: &Vector3<f64>,
    v: &Vector3<f64>,
) -> [Vector3<f64>; 5] {
    let t = -a0;
    let c = -2.0 * w.cross(v);
    let f = -w.cross(&w.cross(r));
    let e = -al.cross(r);
    [t, c, f, e, t + c + f + e]
}

#[inline(never)]
fn lib_map_point(m: &FrameMotion<AnyFrame, AnyFrame>, p: &PointKinematics<AnyFrame>) -> PointKinematics<AnyFrame> {
    m.map_point(p)
}
#[inline(never)]
fn lib_compose(m1: &FrameMotion<AnyFrame, AnyFrame>, m2: &FrameMotion<AnyFrame, AnyFrame>) -> FrameMotion<AnyFrame, AnyFrame> {
    m1.then(m2)
}
#[inline(never)]
fn lib_inverse(m: &FrameMotion<AnyFrame, AnyFrame>) -> FrameMotion<AnyFrame, AnyFrame> {
    m.inverse()
}
#[inline(never)]
fn lib_apparent(d: &FrameDynamics, r: &Vector3<f64>, v: &Vector3<f64>) -> rotaframe::apparent::ApparentAcceleration {
    apparent_terms(d, r, v)
}

fn benches(c: &mut Criterion) {
    let (motions, raws, points) = inputs();
    let dynamics: Vec<FrameDynamics> = raws
        .iter()
        .map(|r| FrameDynamics { angular_velocity: r.w, angular_acceleration: r.al, origin_acceleration: r.a })
        .collect();

    let mut g = c.benchmark_group("map_point");
    g.throughput(Throughput::Elements(N as u64));
    g.bench_function("rotaframe", |b| {
        b.iter(|| {
            for (m, p) in motions.iter().zip(&points) {
                black_box(lib_map_point(black_box(m), black_box(p)));
            }
        })
    });
    g.bench_function("hand_written", |b| {
        b.iter(|| {
            for (m, p) in raws.iter().zip(&points) {
                black_box(hand_map_point(black_box(m), &p.position, &p.velocity, &p.acceleration));
            }
        })
    });
    g.finish();

    let mut g = c.benchmark_group("compose");
    g.throughput(Throughput::Elements(N as u64));
    g.bench_function("rotaframe", |b| {
        b.iter(|| {
            for w in motions.windows(2) {
                black_box(lib_compose(black_box(&w[0]), black_box(&w[1])));
            }
        })
    });
    g.bench_function("hand_written", |b| {
        b.iter(|| {
            for w in raws.windows(2) {
                black_box(hand_compose(black_box(&w[0]), black_box(&w[1])));
            }
        })
    });
    g.finish();

    let mut g = c.benchmark_group("inverse");
    g.throughput(Throughput::Elements(N as u64));
    g.bench_function("rotaframe", |b| {
        b.iter(|| {
            for m in &motions {
                black_box(lib_inverse(black_box(m)));
            }
        })
    });
    g.bench_function("hand_written", |b| {
        b.iter(|| {
            for m in &raws {
                black_box(hand_inverse(black_box(m)));
            }
        })
    });
    g.finish();

    let mut g = c.benchmark_group("apparent");
    g.throughput(Throughput::Elements(N as u64));
    g.bench_function("rotaframe", |b| {
        b.iter(|| {
            for (d, p) in dynamics.iter().zip(&points) {
                black_box(lib_apparent(black_box(d), &p.position, &p.velocity));
            }
        })
    });
    g.bench_function("hand_written", |b| {
        b.iter(|| {
            for (d, p) in dynamics.iter().zip(&points) {
                black_box(hand_apparent(
                    black_box(&d.angular_velocity),
                    &d.angular_acceleration,
                    &d.origin_acceleration,
                    &p.position,
                    &p.velocity,
                ));
            }
        })
    });
    g.finish();
}

criterion_group!(kinematics, benches);
criterion_main!(kinematics);
