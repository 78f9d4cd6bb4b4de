//! Criterion benchmark of the full sensitivity (tornado, break-even factors, hurdle
//! band, count map of every component, two-way table) of a ten-component deal of 481
//! monthly flows.
#![allow(missing_docs)]

use candor::engine::sensitivity::{sensitivity, Component, SensitivityOptions};
use candor::engine::{FlowPoint, Flows};
use candor::model::Rates;
use criterion::{black_box, criterion_group, criterion_main, Criterion};
use rust_decimal::Decimal;

/// A 40-year monthly deal of our own invention (a small port terminal): ten
/// components, each a few of the 481 months, netting to one series of 481 flows.
fn terminal_deal(seed: u64) -> Vec<Component> {
    let mut state = seed.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut next = move |n: i64| {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((state >> 33) as i64) % n
    };
    // (key, first month, last month, cents a month around, sign)
    let lines: [(&str, i64, i64, i64, i64); 10] = [
        ("build", 0, 23, 40_000_000, -1),
        ("berth_fees", 18, 480, 9_000_000, 1),
        ("storage", 24, 480, 4_000_000, 1),
        ("staff", 18, 480, 3_500_000, -1),
        ("power", 18, 480, 1_200_000, -1),
        ("upkeep", 30, 480, 800_000, -1),
        ("rebuild", 236, 247, 30_000_000, -1),
        ("grants", 0, 11, 6_000_000, 1),
        ("tax", 36, 480, 1_500_000, -1),
        ("closure", 468, 480, 25_000_000, -1),
    ];
    lines
        .iter()
        .map(|&(key, first, last, size, sign)| Component {
            key: key.to_string(),
            label: key.replace('_', " "),
            flows: Flows {
                points: (first..=last)
                    .map(|month| FlowPoint {
                        offset: month,
                        amount: Decimal::new(sign * (size + next(size / 5)), 2),
                        date: None,
                        period: Some(month as u32),
                        note: None,
                    })
                    .collect(),
                units_per_year: 12,
                periods_per_year: Some(12),
            },
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let deals: Vec<Vec<Component>> = (0..8).map(terminal_deal).collect();
    let rates = Rates {
        hurdle: Decimal::new(8, 2),
        finance: Decimal::new(6, 2),
        reinvestment: Decimal::new(8, 2),
    };
    let options = SensitivityOptions::default();
    let mut group = c.benchmark_group("sensitivity");
    group.sample_size(20);
    group.bench_function("ten components, 481 monthly flows", |b| {
        let mut i = 0;
        b.iter(|| {
            i = (i + 1) % deals.len();
            black_box(sensitivity(black_box(&deals[i]), &rates, &options))
        })
    });
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default();
    targets = bench
}
criterion_main!(benches);
