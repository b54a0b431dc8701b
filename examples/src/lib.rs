//! Shared printing helpers for the rotaframe examples.

use rotaframe::apparent::ApparentAcceleration;
use rotaframe::frames::Frame;
use rotaframe::nalgebra::Vector3;

/// Standard gravity, for expressing accelerations in g (CGPM 1901 conventional value).
pub const STANDARD_GRAVITY: f64 = 9.806_65;

/// Formats a number in scientific notation with a signed two-digit exponent ("1.4622e+00"),
/// printing negative zero as zero.
#[must_use]
pub fn sci(x: f64) -> String {
    let s = format!("{:.4e}", x + 0.0);
    match s.split_once('e') {
        Some((mantissa, exp)) => {
            let e: i32 = exp.parse().unwrap_or(0);
            format!("{mantissa}e{}{:02}", if e < 0 { '-' } else { '+' }, e.abs())
        }
        None => s,
    }
}

/// Formats a direction as a unit vector, or "—" for a zero vector.
#[must_use]
pub fn direction(v: &Vector3<f64>) -> String {
    let n = v.norm();
    if n == 0.0 {
        "—".to_string()
    } else {
        let u = v / n;
        format!("({:+.3}, {:+.3}, {:+.3})", u.x + 0.0, u.y + 0.0, u.z + 0.0)
    }
}

/// A frame's name as the trade writes it: the acronyms in capitals (NED, ENU, ECEF, ECI, GCRS,
/// ITRS), other names as they are.
#[must_use]
pub fn trade_name(name: &str) -> String {
    match name {
        "Ned" | "Enu" | "Ecef" | "Eci" | "Gcrs" | "Itrs" => name.to_uppercase(),
        _ => name.to_string(),
    }
}

/// Prints an apparent-acceleration budget as a table: each term's components, magnitude in
/// m/s² and in g, and direction, resolved in the frame `B` whose axis names are given.
/// Components below 1e-12 of the table's largest term are rounding residue (the sum of a
/// few products of numbers of that size rounds to about 1e-16 of it) and print as zero.
pub fn print_budget<B: Frame>(title: &str, axes: [&str; 3], terms: &ApparentAcceleration<B>) {
    println!("{title}");
    println!("resolved in {} axes ({}, {}, {})", trade_name(B::NAME), axes[0], axes[1], axes[2]);
    println!("{:<14} {:>13} {:>13} {:>13} {:>13} {:>11}   direction", "term", axes[0], axes[1], axes[2], "|a| m/s²", "|a| g");
    let rows = [
        ("translational", terms.translational),
        ("Coriolis", terms.coriolis),
        ("centrifugal", terms.centrifugal),
        ("Euler", terms.euler),
        ("total", terms.total),
    ];
    let largest = rows.iter().map(|(_, v)| v.norm()).fold(0.0, f64::max);
    let shown = |v: &Vector3<f64>| v.map(|x| if x.abs() <= 1e-12 * largest { 0.0 } else { x });
    for (i, (name, v)) in rows.iter().enumerate() {
        let v = &shown(v);
        if i == rows.len() - 1 {
            println!("{}", "-".repeat(100));
        }
        println!(
            "{:<14} {:>13} {:>13} {:>13} {:>13} {:>11}   {}",
            name,
            sci(v.x),
            sci(v.y),
            sci(v.z),
            sci(v.norm()),
            sci(v.norm() / STANDARD_GRAVITY),
            direction(v)
        );
    }
    println!();
}
