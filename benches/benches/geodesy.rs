//! Throughput of the batch geodetic conversions over slices, beside a plain f64 loop of the
//! textbook formulas (libm trigonometry, one Bowring iteration) in the same run.
//!
//! Run with `cargo bench -p rotaframe-benches --bench geodesy`. Goals (single core):
//! ≥ 30 million forward and ≥ 15 million inverse conversions per second, at the library's
//! nanometre accuracy. The textbook loop is less accurate (about 2 nm forward; its single
//! Bowring step errs by up to 1.4 nm) and is shown for scale only.

use std::hint::black_box;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use rotaframe::earth::{WGS84, ecef_to_geodetic_slices, geodetic_to_ecef_slices};
use rotaframe_tests::Seeded;

fn inputs(n: usize) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut rng = Seeded(7);
    let lat = (0..n).map(|_| (rng.next_unit() - 0.5) * std::f64::consts::PI).collect();
    let lon = (0..n).map(|_| (rng.next_unit() - 0.5) * 2.0 * std::f64::consts::PI).collect();
    let h = (0..n).map(|_| (rng.next_unit() - 0.5) * 2.0e4).collect();
    (lat, lon, h)
}

fn textbook_forward(lat: &[f64], lon: &[f64], h: &[f64], out: &mut [[f64; 3]]) {
    let (a, e2) = (WGS84.semi_major_axis(), WGS84.eccentricity_squared());
    for i in 0..lat.len() {
        let (sl, cl) = lat[i].sin_cos();
        let (so, co) = lon[i].sin_cos();
        let n = a / (1.0 - e2 * sl * sl).sqrt();
        out[i] = [(n + h[i]) * cl * co, (n + h[i]) * cl * so, (n * (1.0 - e2) + h[i]) * sl];
    }
}

fn textbook_inverse(xyz: &[[f64; 3]], lat: &mut [f64], lon: &mut [f64], h: &mut [f64]) {
    let (a, b, e2, ep2) =
        (WGS84.semi_major_axis(), WGS84.semi_minor_axis(), WGS84.eccentricity_squared(), WGS84.second_eccentricity_squared());
    for (i, &[x, y, z]) in xyz.iter().enumerate() {
        let p = (x * x + y * y).sqrt();
        let beta = (a * z).atan2(b * p);
        let (sb, cb) = beta.sin_cos();
        let phi = (z + ep2 * b * sb * sb * sb).atan2(p - e2 * a * cb * cb * cb);
        let (sp, cp) = phi.sin_cos();
        lat[i] = phi;
        lon[i] = y.atan2(x);
        h[i] = p * cp + z * sp - a * (1.0 - e2 * sp * sp).sqrt();
    }
}

fn benches(c: &mut Criterion) {
    for n in [4096usize, 1 << 20] {
        let (lat, lon, h) = inputs(n);
        let mut xyz = vec![[0.0; 3]; n];
        let (mut la, mut lo, mut hh) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
        let mut g = c.benchmark_group("geodetic_to_ecef");
        g.throughput(Throughput::Elements(n as u64));
        g.bench_with_input(BenchmarkId::new("rotaframe", n), &n, |bch, _| {
            bch.iter(|| geodetic_to_ecef_slices(&WGS84, black_box(&lat), black_box(&lon), black_box(&h), &mut xyz).unwrap())
        });
        g.bench_with_input(BenchmarkId::new("textbook", n), &n, |bch, _| {
            bch.iter(|| textbook_forward(black_box(&lat), black_box(&lon), black_box(&h), &mut xyz))
        });
        g.finish();
        geodetic_to_ecef_slices(&WGS84, &lat, &lon, &h, &mut xyz).unwrap();
        let mut g = c.benchmark_group("ecef_to_geodetic");
        g.throughput(Throughput::Elements(n as u64));
        g.bench_with_input(BenchmarkId::new("rotaframe", n), &n, |bch, _| {
            bch.iter(|| ecef_to_geodetic_slices(&WGS84, black_box(&xyz), &mut la, &mut lo, &mut hh).unwrap())
        });
        g.bench_with_input(BenchmarkId::new("textbook", n), &n, |bch, _| {
            bch.iter(|| textbook_inverse(black_box(&xyz), &mut la, &mut lo, &mut hh))
        });
        g.finish();
    }
}

criterion_group!(geodesy, benches);
criterion_main!(geodesy);
