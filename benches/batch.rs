//! Criterion benchmark of batch screening in one process: `screen::screen_stream` on
//! 200 lines of 481 monthly amounts (the shape of `bench/compare.py`'s corpus: an
//! outlay over up to two years, seasonal income with noise, an overhaul now and then,
//! sometimes a closing cost), without process start. The whole process against pyxirr
//! is measured by `bench/compare.py`.
#![allow(missing_docs)]

use candor::screen::screen_stream;
use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};

/// Lines of the batch contract, of our own invention, from a seed.
fn corpus(lines: usize, seed: u64) -> Vec<u8> {
    let mut state = seed.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut next = move |n: i64| {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((state >> 33) as i64) % n.max(1)
    };
    let mut text = String::new();
    for line in 0..lines {
        // Cents.
        let size = (1_000_000 + next(99_000_000)) * 100;
        let mut flows = vec![0i64; 481];
        flows[0] = -size / 2;
        let build = next(25) as usize;
        for f in flows.iter_mut().take(build + 1).skip(1) {
            *f = -size / (2 * build as i64);
        }
        let yearly = size / 100 * (5 + next(21));
        for (k, f) in flows.iter_mut().enumerate().skip(build + 1) {
            let season = if matches!(k % 12, 5..=7) { 12 } else { 10 };
            *f = yearly / 12 * season / 10 * (60 + next(81)) / 100;
            if next(1000) < 8 {
                *f -= yearly * (50 + next(251)) / 100;
            }
        }
        if next(10) < 4 {
            flows[480] -= size * (20 + next(181)) / 100;
        }
        let amounts: Vec<String> = flows
            .iter()
            .map(|c| {
                format!(
                    "{}{}.{:02}",
                    if *c < 0 { "-" } else { "" },
                    c.abs() / 100,
                    c.abs() % 100
                )
            })
            .collect();
        text.push_str(&format!(
            "{{\"id\": \"b{line:04}\", \"every\": \"month\", \"amounts\": [{}]}}\n",
            amounts.join(", ")
        ));
    }
    text.into_bytes()
}

fn bench(c: &mut Criterion) {
    let input = corpus(200, 481);
    // Every line is screened, none refused.
    let mut first = Vec::new();
    screen_stream(&mut &input[..], &mut first).expect("screened");
    let answers = String::from_utf8(first).expect("UTF-8");
    assert_eq!(answers.lines().count(), 200);
    assert!(answers
        .lines()
        .all(|l| l.contains("\"count\"") && !l.contains("\"error\"")));
    let mut group = c.benchmark_group("batch");
    group.throughput(Throughput::Elements(200));
    group.sample_size(20);
    group.bench_function("rates --batch, 200 lines of 481 monthly amounts", |b| {
        let mut out = Vec::with_capacity(1 << 20);
        b.iter(|| {
            out.clear();
            screen_stream(&mut black_box(&input[..]), &mut out).expect("screened");
            black_box(out.len())
        })
    });
    group.finish();
}

criterion_group!(batch, bench);
criterion_main!(batch);
