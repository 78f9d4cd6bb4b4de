//! Criterion benchmarks of the root engine on deal-like series.
#![allow(missing_docs)]

use candor::engine::roots::find_roots;
use criterion::{black_box, criterion_group, criterion_main, Criterion};
use rust_decimal::Decimal;

/// A 40-year monthly series (481 flows): an outlay, seasonal inflows, an overhaul in
/// year 20 and a closure cost at the end, so that it has two sign-change regions.
fn monthly_deal(seed: u64) -> Vec<Decimal> {
    let mut state = seed
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    let mut next = || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 33) as i64
    };
    let mut v = vec![Decimal::new(-(500_000_000 + next() % 100_000_000), 2)];
    for k in 1..481 {
        let base = 4_000_000 + next() % 1_000_000 + if k % 12 < 3 { 500_000 } else { 0 };
        let amount = if k == 240 {
            -150_000_000
        } else if k == 480 {
            -200_000_000
        } else {
            base
        };
        v.push(Decimal::new(amount, 2));
    }
    v
}

fn bench(c: &mut Criterion) {
    let series: Vec<Vec<Decimal>> = (0..64).map(monthly_deal).collect();
    let offsets: Vec<i64> = (0..481).collect();
    c.bench_function("all roots, 481 monthly flows", |b| {
        let mut i = 0;
        b.iter(|| {
            i = (i + 1) % series.len();
            black_box(find_roots(black_box(&series[i]), &offsets, 12))
        })
    });
    let lorie = [
        Decimal::from(-1600),
        Decimal::from(10000),
        Decimal::from(-10000),
    ];
    c.bench_function("all roots, 3 yearly flows", |b| {
        b.iter(|| black_box(find_roots(black_box(&lorie), &[0, 1, 2], 1)))
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default();
    targets = bench
}
criterion_main!(benches);
