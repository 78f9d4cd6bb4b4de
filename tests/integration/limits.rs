//! The engine at the edges of what a deal file may hold: amounts from one cent to
//! 10^15 in one deal, a century of daily dated flows, IRRs from -99.9999% to beyond
//! 10^100 and beyond binary floats, hurdle rates at both ends of the accepted range, and
//! a flow list at exactly the limit. Every check is against an answer known outside the
//! engine: a series built by multiplying out chosen factors (x - x0) in exact decimals,
//! so that its IRRs are exactly the chosen x0 - 1, or an NPV computed here in exact
//! rational arithmetic (num-bigint) and rounded to the cent half away from zero. Each
//! series goes through the library as a deal file would: `input::parse`,
//! `model::validate`, `engine::analyse`.

use candor::engine::ScenarioAnalysis;
use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{Signed, Zero};
use rust_decimal::prelude::*;
use rust_decimal_macros::dec;

/// Parses, validates and analyses a deal file's text; the base case's analysis.
fn analyse(yaml: &str) -> ScenarioAnalysis {
    let raw = candor::input::parse(yaml).unwrap_or_else(|d| panic!("parse: {d:?}"));
    let mut no_csv = |_: &str| Err("no CSV files in these tests".to_string());
    let deal = candor::model::validate(&raw, &mut no_csv)
        .unwrap_or_else(|d| panic!("validate: {d:?}\n{}", &yaml[..yaml.len().min(400)]));
    candor::engine::analyse(&deal).scenarios.remove(0)
}

fn header(hurdle: &str) -> String {
    format!(
        "candor: 1\ndeal: {{ name: Limits, currency: EUR, as_of: 2027-01-01 }}\nhurdle_rate: {hurdle}\n"
    )
}

fn yearly(hurdle: &str, amounts: &[Decimal]) -> String {
    periodic(hurdle, "year", amounts)
}

fn periodic(hurdle: &str, every: &str, amounts: &[Decimal]) -> String {
    let list: Vec<String> = amounts.iter().map(Decimal::to_string).collect();
    format!(
        "{}cash_flows:\n  every: {every}\n  amounts: [{}]\n",
        header(hurdle),
        list.join(", ")
    )
}

/// Dated flows under `day_count`, each `days` after 2027-01-01.
fn dated(hurdle: &str, day_count: &str, flows: &[(u64, Decimal)]) -> String {
    let start = chrono::NaiveDate::from_ymd_opt(2027, 1, 1).expect("a date");
    let mut text = format!(
        "{}cash_flows:\n  day_count: {day_count}\n  dated:\n",
        header(hurdle)
    );
    for (day, amount) in flows {
        let date = start + chrono::Days::new(*day);
        text.push_str(&format!("    - {{ date: {date}, amount: {amount} }}\n"));
    }
    text
}

/// Coefficients (first flow first) of -prod (x - x_i) * scale: the flows of a series
/// whose growth factors per clock step are exactly the x_i (NPV(r) (1+r)^n is the
/// polynomial sum C_k x^(n-k) with x = 1 + r; common practice, elementary algebra).
fn from_factors(factors: &[Decimal], scale: Decimal) -> Vec<Decimal> {
    let mut c = vec![-scale];
    for x in factors {
        let mut next = vec![Decimal::ZERO; c.len() + 1];
        for (i, a) in c.iter().enumerate() {
            next[i] += *a;
            next[i + 1] -= *a * *x;
        }
        c = next;
    }
    c.into_iter().map(|d| d.normalize()).collect()
}

/// A decimal as an exact fraction.
fn ratio(d: Decimal) -> (BigInt, BigInt) {
    (
        BigInt::from(d.mantissa()),
        BigInt::from(10u32).pow(d.scale()),
    )
}

/// NPV of yearly (or per-period) flows at a growth factor per period `g` given as an
/// exact decimal, in exact rational arithmetic, rounded to the cent half away from zero
/// (the engine's documented rounding, common practice for money).
fn exact_npv_cents(amounts: &[Decimal], g: Decimal) -> Decimal {
    // NPV = sum C_k g^-k = sum C_k gd^k / gn^k.
    let (gn, gd) = ratio(g);
    let n = amounts.len() as u32;
    let micro = BigInt::from(1_000_000u32);
    let den = &micro * gn.pow(n - 1);
    let mut num = BigInt::zero();
    for (k, a) in amounts.iter().enumerate() {
        let (an, ad) = ratio(*a);
        // an/ad * gd^k / gn^k over the common denominator 10^6 gn^(n-1); every amount
        // has at most 6 decimals, so the division by ad is exact.
        let k = k as u32;
        num += an * gd.pow(k) * gn.pow(n - 1 - k) * &micro / &ad;
    }
    let hundred = BigInt::from(100u32);
    let scaled = num * &hundred;
    let (q, r) = scaled.abs().div_rem(&den);
    let q = if r * 2u32 >= den { q + 1u32 } else { q };
    let q = if scaled.is_negative() { -q } else { q };
    Decimal::from_i128_with_scale(i128::try_from(q).expect("fits"), 2)
}

/// True when an annual rate lies in a root's certified interval; the slack of a few
/// units in the 15th digit covers the binary-float rounding of the expected value.
fn holds(interval: Option<[f64; 2]>, rate: f64) -> bool {
    interval.is_some_and(|[lo, hi]| {
        let slack = 1e-14 * rate.abs().max(1.0);
        lo - slack <= rate && rate <= hi + slack
    })
}

/// The same for log10(1 + rate), the form every root has however extreme.
fn holds_log(interval: [f64; 2], value: f64) -> bool {
    let slack = 1e-14 * value.abs().max(1.0);
    interval[0] - slack <= value && value <= interval[1] + slack
}

#[test]
fn one_cent_and_ten_to_the_fifteen_in_one_deal() {
    // Exact construction: C = -(x - 1.1) Q(x) with Q's coefficients chosen so that the
    // flows hold 0.01 and amounts near 10^15 together; one sign change, so 10% is the
    // only IRR (Descartes' rule of signs).
    let x0 = dec!(1.1);
    let q0 = dec!(900000000000000);
    let q1 = x0 * q0 - dec!(0.01);
    let q2 = q1;
    let q3 = x0 * q2 - dec!(0.01);
    let q4 = q3 * dec!(0.5);
    let amounts = vec![
        -q0,
        x0 * q0 - q1,
        x0 * q1 - q2,
        x0 * q2 - q3,
        x0 * q3 - q4,
        x0 * q4,
    ];
    assert_eq!(amounts[1], dec!(0.01));
    assert_eq!(amounts[3], dec!(0.01));
    assert!(amounts
        .iter()
        .all(|a| a.abs() <= dec!(1000000000000000) && a.scale() <= 6));
    let s = analyse(&yearly("7%", &amounts));
    assert!(s.irr.certified, "{:?}", s.irr);
    assert_eq!(s.irr.count, 1);
    let root = &s.irr.roots[0];
    assert!(holds(root.interval, 0.1), "{:?}", root.interval);
    // NPV at 7% to the cent: exact rational computation in this test.
    assert_eq!(s.npv_at_hurdle, Some(exact_npv_cents(&amounts, dec!(1.07))));
}

#[test]
fn npv_to_the_cent_at_ten_to_the_fifteen_against_exact_rationals() {
    // Forty flows mixing 10^15-sized amounts with odd cents and micro-units, at hurdles
    // whose growth per period is a short decimal, so that the NPV is an exact fraction
    // (computed here); the engine must round it to the same cent.
    let mut amounts = Vec::new();
    let mut seed: u64 = 0x2545_f491_4f6c_dd1d;
    for k in 0..40 {
        // xorshift64: a fixed, repeatable spread of magnitudes and signs.
        seed ^= seed << 13;
        seed ^= seed >> 7;
        seed ^= seed << 17;
        // Whole units below 10^15 and a micro-unit part from the same draw.
        let units = i128::from(seed % 1_000_000_000_000_000);
        let micros = i128::from((seed >> 20) % 1_000_000);
        let sign = if k == 0 || seed.is_multiple_of(3) {
            -1
        } else {
            1
        };
        let amount = Decimal::from_i128_with_scale(sign * (units * 1_000_000 + micros), 6);
        amounts.push(amount.normalize());
    }
    amounts[7] = dec!(0.01);
    amounts[8] = dec!(-1000000000000000);
    amounts[9] = dec!(999999999999999.999999);
    for (every, hurdle, g) in [
        ("year", "7%", dec!(1.07)),
        ("year", "9.5%", dec!(1.095)),
        // 10.25% a year is exactly 5% a half-year: 1.05^2 = 1.1025.
        ("half-year", "10.25%", dec!(1.05)),
        // 46.41% a year is exactly 10% a quarter: 1.1^4 = 1.4641.
        ("quarter", "46.41%", dec!(1.1)),
        // The highest hurdle accepted, 1,000,000%: growth 10001 a year.
        ("year", "1000000%", dec!(10001)),
    ] {
        let s = analyse(&periodic(hurdle, every, &amounts));
        assert_eq!(
            s.npv_at_hurdle,
            Some(exact_npv_cents(&amounts, g)),
            "{every} flows at {hurdle}"
        );
    }
}

#[test]
fn npv_at_a_hurdle_of_minus_99_9999_percent_when_it_fits() {
    // At -99.9999% a year every year multiplies value by 10^6: -1,000 + 600 10^6 +
    // 600.01 10^12 = 600010599999000 exactly (exact rational computation), well inside
    // what the engine can print.
    let amounts = [dec!(-1000), dec!(600), dec!(600.01)];
    let s = analyse(&yearly("-99.9999%", &amounts));
    let want = exact_npv_cents(&amounts, dec!(0.000001));
    assert_eq!(want, dec!(600010599999000));
    assert_eq!(s.npv_at_hurdle, Some(want));
}

#[test]
fn an_npv_exactly_half_a_cent_from_two_cents_rounds_away_from_zero() {
    // Smallest case: -1,000,000 now and 1,050,000.00525 a year later at 5% are worth
    // exactly -1,000,000 + 1,000,000.005 = 0.005 (exact construction), which is 0.01
    // half away from zero; the engine prints 0 and calls the deal indifferent.
    let two = [dec!(-1000000), dec!(1050000.00525)];
    assert_eq!(exact_npv_cents(&two, dec!(1.05)), dec!(0.01));
    let s = analyse(&yearly("5%", &two));
    assert_eq!(s.npv_at_hurdle, Some(dec!(0.01)), "exact NPV 0.005");
    assert_eq!(s.decision, candor::engine::Decision::Accept);
    // Exact construction at 5% a year (1/1.05^k = 20^k/21^k): flows b_k 21^k discount to
    // the whole numbers b_k 20^k, and the first flow sets the NPV to ... .005 exactly.
    // Half away from zero is the rounding the engine documents (common practice).
    let mut amounts = vec![Decimal::ZERO];
    let mut pv = Decimal::ZERO;
    for k in 1..=11u32 {
        let b = Decimal::from(if k % 2 == 0 { 2 } else { -1 });
        amounts.push(b * Decimal::from(21u64.pow(k)));
        pv += b * Decimal::from(20u64.pow(k));
    }
    for target in [dec!(123456789.125), dec!(-123456789.125)] {
        amounts[0] = target - pv;
        assert!(amounts.iter().all(|a| a.abs() <= dec!(1000000000000000)));
        let s = analyse(&yearly("5%", &amounts));
        let want = target.round_dp_with_strategy(2, RoundingStrategy::MidpointAwayFromZero);
        assert_eq!(exact_npv_cents(&amounts, dec!(1.05)), want);
        assert_eq!(s.npv_at_hurdle, Some(want), "exact NPV {target}");
        let decision = if target > Decimal::ZERO {
            candor::engine::Decision::Accept
        } else {
            candor::engine::Decision::Reject
        };
        assert_eq!(s.decision, decision);
    }
}

#[test]
fn an_irr_of_minus_99_9999_percent() {
    // Exact construction: -1,000,000 now and 1 a year later grow by exactly 10^-6, so
    // the only IRR is -99.9999%; log10(1 + r) = -6 exactly.
    let s = analyse(&yearly("9%", &[dec!(-1000000), dec!(1)]));
    assert!(s.irr.certified);
    assert_eq!(s.irr.count, 1);
    let r = &s.irr.roots[0];
    assert!(holds_log(r.log10_interval, -6.0), "{:?}", r.log10_interval);
    assert!(holds(r.interval, -0.999999), "{:?}", r.interval);
    // Two more chosen roots beside it (10% and 150%): three sign changes, three IRRs.
    let amounts = from_factors(&[dec!(0.000001), dec!(1.1), dec!(2.5)], dec!(1000000));
    let s = analyse(&yearly("9%", &amounts));
    assert!(s.irr.certified, "{:?}", s.irr);
    assert_eq!(s.irr.count, 3, "{amounts:?}");
    for (root, want) in s.irr.roots.iter().zip([-0.999999, 0.1, 1.5]) {
        assert!(holds(root.interval, want), "{want}: {:?}", root.interval);
    }
}

#[test]
fn an_irr_beyond_ten_to_the_hundred_from_a_one_day_first_interval() {
    // Exact construction: -1 on one day and +2 the next double the money in a day, so
    // under act/365f 1 + r = 2^365, about 7.5e109 (log10 = 365 log10 2).
    let s = analyse(&dated("9%", "act/365f", &[(0, dec!(-1)), (1, dec!(2))]));
    assert!(s.irr.certified);
    assert_eq!(s.irr.count, 1);
    let r = &s.irr.roots[0];
    let want = 365.0 * 2f64.log10();
    assert!(holds_log(r.log10_interval, want), "{:?}", r.log10_interval);
    let rate = r.annual_rate.expect("2^365 is within binary floats");
    assert!((rate / 2f64.powi(365) - 1.0).abs() < 1e-9, "{rate}");
    assert!(
        r.extreme,
        "a rate of 7.5e109 is flagged as beyond economic reality"
    );
}

#[test]
fn an_irr_beyond_binary_floats_is_reported_by_its_logarithm() {
    // Exact construction: one cent grows to 10^15 in a day: 10^17 a day, so
    // 1 + r = 10^(17 * 365) = 10^6205 under act/365f, far beyond f64's 1.8e308.
    let s = analyse(&dated(
        "9%",
        "act/365f",
        &[(0, dec!(-0.01)), (1, dec!(1000000000000000))],
    ));
    assert!(s.irr.certified);
    assert_eq!(s.irr.count, 1);
    let r = &s.irr.roots[0];
    assert!(
        holds_log(r.log10_interval, 6205.0),
        "{:?}",
        r.log10_interval
    );
    assert_eq!(r.annual_rate, None, "no binary float holds 10^6205");
    assert_eq!(r.interval, None);
}

#[test]
fn irrs_from_near_minus_100_percent_to_beyond_ten_to_the_hundred_together() {
    // Exact construction: daily growth factors 0.5, 1.0001 and 2, so under act/365f the
    // IRRs are 0.5^365 - 1 (log10 -109.87), 1.0001^365 - 1 (about 3.72%) and 2^365 - 1
    // (log10 109.87), all in one series of four dated flows.
    let factors = [dec!(0.5), dec!(1.0001), dec!(2)];
    let amounts = from_factors(&factors, dec!(10000));
    let flows: Vec<(u64, Decimal)> = amounts
        .iter()
        .enumerate()
        .map(|(d, a)| (d as u64, *a))
        .collect();
    let s = analyse(&dated("9%", "act/365f", &flows));
    assert!(s.irr.certified, "{:?}", s.irr);
    assert_eq!(s.irr.count, 3);
    for (root, x) in s.irr.roots.iter().zip([0.5f64, 1.0001, 2.0]) {
        let want = 365.0 * x.log10();
        assert!(
            holds_log(root.log10_interval, want),
            "{want}: {:?}",
            root.log10_interval
        );
    }
}

#[test]
fn a_century_of_daily_flows_under_act_365f() {
    // Exact construction: -(x - 1.0002) times 36,525 equal coefficients of 1000 gives
    // -1000 on day 0, 0.2 on each later day and 1000.2 on the last: one sign change, and
    // the daily growth is exactly 1.0002, so 1 + r = 1.0002^365 (act/365f).
    let n = 36_525u64;
    let mut flows = vec![(0u64, dec!(-1000))];
    flows.extend((1..n).map(|d| (d, dec!(0.2))));
    flows.push((n, dec!(1000.2)));
    let s = analyse(&dated("9%", "act/365f", &flows));
    assert_eq!(s.flows.len(), 36_526);
    assert!(s.irr.certified, "{:?}", s.irr.unresolved);
    assert_eq!(s.irr.count, 1);
    let r = &s.irr.roots[0];
    let want = 365.0 * 1.0002f64.log10();
    assert!(holds_log(r.log10_interval, want), "{:?}", r.log10_interval);
    assert!(
        holds(r.interval, 1.0002f64.powi(365) - 1.0),
        "{:?}",
        r.interval
    );
}

#[test]
fn a_century_of_daily_flows_under_act_act_isda() {
    // Flows that sum to zero have an IRR of exactly 0% under every day count (each
    // discount factor is 1); one sign change makes it the only one (Descartes). 100
    // years of days from 2027-01-01 to 2127-01-01 are 36,524 days (24 leap days), so
    // 36,525 flows.
    let days = 36_524u64;
    let mut flows = vec![(0u64, Decimal::from(-(days as i64)))];
    flows.extend((1..=days).map(|d| (d, Decimal::ONE)));
    let s = analyse(&dated("9%", "act/act-isda", &flows));
    assert_eq!(s.flows.len(), 36_525);
    assert!(s.irr.certified, "{:?}", s.irr.unresolved);
    assert_eq!(s.irr.count, 1);
    let r = &s.irr.roots[0];
    assert!(holds(r.interval, 0.0), "{:?}", r.interval);
    assert!(
        (s.totals.horizon_years - 100.0).abs() < 1e-9,
        "{}",
        s.totals.horizon_years
    );
}

#[test]
fn a_flow_list_at_exactly_the_limit() {
    // 100,000 daily periodic flows (MAX_FLOWS): -(x - 1.0001) times 100,000 equal
    // coefficients, so the daily IRR is exactly 0.01% (exact construction).
    let n = candor::model::MAX_FLOWS;
    let mut amounts = vec![dec!(-10000)];
    amounts.extend(std::iter::repeat_n(dec!(1), n - 2));
    amounts.push(dec!(10001));
    assert_eq!(amounts.len(), n);
    let s = analyse(&periodic("9%", "day", &amounts));
    assert_eq!(s.flows.len(), n);
    assert!(s.irr.certified, "{:?}", s.irr.unresolved);
    assert_eq!(s.irr.count, 1);
    let r = &s.irr.roots[0];
    // 365 periods a year for `every: day` (src/model/mod.rs): log10(1 + r) = 365 log10(1.0001).
    let want = 365.0 * 1.0001f64.log10();
    assert!(holds_log(r.log10_interval, want), "{:?}", r.log10_interval);
    let daily = r.periodic_rate.expect("a periodic rate");
    assert!((daily - 0.0001).abs() < 1e-12, "{daily}");
}

#[test]
fn an_npv_too_large_to_print_is_never_shown_as_zero() {
    // Ten yearly receipts of 600 at a hurdle of -99.9999%: the receipt in year k is
    // worth 600 * 10^(6k) now, so the NPV is 600 (10^6 + 10^12 + ... + 10^60) - 1000,
    // 6.00000600000...e62 (exact rational sum), beyond Decimal's 7.9e28. The engine
    // cannot print it to the cent; it must say so, give its size, and decide by its sign.
    let mut amounts = vec![dec!(-1000)];
    amounts.extend(std::iter::repeat_n(dec!(600), 10));
    let s = analyse(&yearly("-99.9999%", &amounts));
    assert_eq!(
        s.npv_at_hurdle, None,
        "no figure to the cent beyond Decimal's range"
    );
    let approx = s.npv_at_hurdle_approx.expect("the NPV's size");
    assert!(!approx.negative);
    // log10 of the exact sum: 62.778151684678342683... [Python decimal, 40 digits].
    assert!(
        (approx.log10_abs - 62.77815168467834).abs() < 1e-9,
        "{}",
        approx.log10_abs
    );
    assert_eq!(approx.to_scientific(), "6.00e62");
    assert_eq!(s.decision, candor::engine::Decision::Accept);
    let json = serde_json::to_value(&s).expect("JSON");
    assert_eq!(json["npv_at_hurdle"], serde_json::Value::Null);
    assert_eq!(json["npv_at_hurdle_approx"], "6.00e62");
    // The same receipts paid instead of received: the sign and decision follow.
    let paid: Vec<Decimal> = amounts.iter().map(|a| -*a).collect();
    let s = analyse(&yearly("-99.9999%", &paid));
    assert_eq!(s.npv_at_hurdle, None);
    assert!(s.npv_at_hurdle_approx.is_some_and(|a| a.negative));
    assert_eq!(s.decision, candor::engine::Decision::Reject);
    // Monthly flows a fraction of a year apart (the exact rational sum does not apply):
    // at -99.9999% a year, month m multiplies by 10^(m/2). Month 2: -1000 + 600 * 10 =
    // 5000 (exact construction), inside the range.
    let s = analyse(&periodic(
        "-99.9999%",
        "month",
        &[dec!(-1000), dec!(0), dec!(600)],
    ));
    assert_eq!(s.npv_at_hurdle, Some(dec!(5000)));
    // Month 119: 600 * 10^59.5 - 1000, the size from the scaled double-double sum.
    let mut monthly = vec![dec!(-1000)];
    monthly.extend(std::iter::repeat_n(Decimal::ZERO, 118));
    monthly.push(dec!(600));
    let s = analyse(&periodic("-99.9999%", "month", &monthly));
    assert_eq!(s.npv_at_hurdle, None);
    let approx = s.npv_at_hurdle_approx.expect("the NPV's size");
    // log10(600 * 10^59.5 - 1000) = 62.278151250383643632... [Python decimal, 40 digits].
    assert!(
        (approx.log10_abs - 62.27815125038364).abs() < 1e-9,
        "{}",
        approx.log10_abs
    );
    assert_eq!(s.decision, candor::engine::Decision::Accept);
}

/// The deal file's size limit (`MAX_FILE_BYTES`, 10 MiB) less a little: every file of
/// the shapes below is just inside it.
const NEAR_LIMIT: usize = 10 * 1024 * 1024 - 4096;

const TEN_MB_HEADER: &str = "candor: 1\ndeal: { name: Ten, currency: EUR, as_of: 2027-01-01 }\nhurdle_rate: 9%\ncash_flows: { every: year, amounts: [-1000, 600, 600] }\n";

/// `head`, then `item` repeated while the file stays under [`NEAR_LIMIT`], then `tail`.
fn filled(head: &str, item: &dyn Fn(usize) -> String, tail: &str) -> String {
    let mut text = head.to_string();
    let mut i = 0;
    loop {
        let next = item(i);
        if text.len() + next.len() + tail.len() > NEAR_LIMIT {
            break;
        }
        text.push_str(&next);
        i += 1;
    }
    text.push_str(tail);
    text
}

/// What one run of the binary took: exit code, wall time, processor time (user and
/// system, from `/proc/<pid>/stat`, so that a machine busy with other work does not
/// count) and the peak resident memory in bytes (`VmHWM` of `/proc/<pid>/status`),
/// both sampled while it ran (Linux; elsewhere they stay zero).
fn measured(
    dir: &std::path::Path,
    args: &[&str],
) -> (Option<i32>, std::time::Duration, std::time::Duration, u64) {
    let out = std::fs::File::create(dir.join("out.txt")).expect("create");
    let err = std::fs::File::create(dir.join("err.txt")).expect("create");
    let started = std::time::Instant::now();
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_candor"))
        .args(args)
        .current_dir(dir)
        .stdout(out)
        .stderr(err)
        .spawn()
        .expect("the candor binary runs");
    let status_file = format!("/proc/{}/status", child.id());
    let stat_file = format!("/proc/{}/stat", child.id());
    let mut peak = 0u64;
    let mut ticks = 0u64;
    let status = loop {
        if let Ok(stat) = std::fs::read_to_string(&stat_file) {
            // Fields 14 and 15 (utime, stime), counted after the command's name.
            let fields: Vec<&str> = stat
                .rsplit_once(')')
                .map_or(Vec::new(), |(_, rest)| rest.split_whitespace().collect());
            let field = |k: usize| fields.get(k).and_then(|v| v.parse::<u64>().ok());
            if let (Some(user), Some(system)) = (field(11), field(12)) {
                ticks = ticks.max(user + system);
            }
        }
        if let Ok(status) = std::fs::read_to_string(&status_file) {
            let hwm = status
                .lines()
                .find_map(|l| l.strip_prefix("VmHWM:"))
                .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<u64>().ok());
            peak = peak.max(hwm.unwrap_or(0) * 1024);
        }
        if let Some(status) = child.try_wait().expect("wait") {
            break status;
        }
        std::thread::sleep(std::time::Duration::from_millis(2));
    };
    // Clock ticks are a hundredth of a second on Linux (USER_HZ).
    let cpu = std::time::Duration::from_millis(ticks * 10);
    (status.code(), started.elapsed(), cpu, peak)
}

#[test]
fn a_ten_megabyte_file_of_any_shape_is_refused_or_read_in_bounded_time_and_memory() {
    // Before text fields and lists were bounded, a 9 MB deal name took 37 s and 5.6 GB,
    // and 200,000 risks 24 s and 3.3 GB. Every shape here must finish well inside the
    // guards (measured: see DEVELOPERS.md, "Input limits"); the guards are generous so
    // that a loaded machine does not fail the test, and still far below the old cost.
    let dir = tempfile::tempdir().expect("temp dir");
    let header_without_name =
        "candor: 1\nhurdle_rate: 9%\ncash_flows: { every: year, amounts: [-1000, 600, 600] }\n";
    let shapes: Vec<(&str, String, Option<i32>)> = vec![
        (
            "a nine-megabyte deal name",
            filled(
                &format!("{header_without_name}deal: {{ currency: EUR, as_of: 2027-01-01, name: "),
                &|_| "nnnnnnnnn ".to_string(),
                "end }\n",
            ),
            Some(1),
        ),
        (
            "a name that is one word",
            filled(
                &format!("{header_without_name}deal: {{ currency: EUR, as_of: 2027-01-01, name: "),
                &|_| "n".repeat(1000),
                " }\n",
            ),
            Some(1),
        ),
        (
            "a million risks",
            filled(&format!("{TEN_MB_HEADER}memo:\n  risks:\n"), &|i| format!("    - r{i}\n"), ""),
            Some(1),
        ),
        (
            "a thousand long risks",
            filled(
                &format!("{TEN_MB_HEADER}memo:\n  risks:\n"),
                &|_| format!("    - {}\n", "risk words ".repeat(900)),
                "",
            ),
            Some(1),
        ),
        (
            "a million unknown keys",
            filled(TEN_MB_HEADER, &|i| format!("k{i}: 1\n"), ""),
            Some(1),
        ),
        (
            "one key of nine megabytes",
            filled(TEN_MB_HEADER, &|_| "k".repeat(1000), ": 1\n"),
            Some(1),
        ),
        (
            "three million amounts in many lists",
            filled(
                &format!("{TEN_MB_HEADER}scenarios:\n"),
                &|i| format!("  s{i}:\n    cash_flows:\n      every: year\n      amounts: [{}]\n", "1,".repeat(30_000) + "1"),
                "",
            ),
            Some(1),
        ),
        (
            "one amount of nine megabytes",
            filled(
                "candor: 1\ndeal: { name: Ten, currency: EUR, as_of: 2027-01-01 }\nhurdle_rate: 9%\ncash_flows: { every: year, amounts: [-1000, 600, ",
                &|_| "9".repeat(1000),
                "] }\n",
            ),
            Some(1),
        ),
        (
            "a quoted summary of escapes",
            filled(&format!("{TEN_MB_HEADER}memo:\n  summary: \""), &|_| "\\x41\\u00e9 ".to_string(), "\"\n"),
            Some(1),
        ),
        (
            "100,000 dated flows with notes",
            filled(
                "candor: 1\ndeal: { name: Ten, currency: EUR, as_of: 2027-01-01 }\nhurdle_rate: 9%\ncash_flows:\n  day_count: act/365f\n  dated:\n    - { date: 2027-01-01, amount: -100000000 }\n",
                &|i| {
                    if i >= 99_999 {
                        return "#\n".repeat(500);
                    }
                    let date = chrono::NaiveDate::from_ymd_opt(2027, 1, 2).expect("a date")
                        + chrono::Days::new(i as u64);
                    format!("    - {{ date: {date}, amount: 1234.56, note: {} }}\n", "note ".repeat(8))
                },
                "",
            ),
            Some(0),
        ),
    ];
    let mut measures = Vec::new();
    for (what, text, expected) in &shapes {
        assert!(
            text.len() <= 10 * 1024 * 1024,
            "{what}: {} bytes",
            text.len()
        );
        std::fs::write(dir.path().join("deal.yaml"), text).expect("write");
        let (code, time, cpu, peak) = measured(dir.path(), &["check", "deal.yaml"]);
        let stderr = std::fs::read_to_string(dir.path().join("err.txt")).unwrap_or_default();
        assert_eq!(
            code,
            *expected,
            "{what}: {}",
            &stderr[..stderr.len().min(2000)]
        );
        assert!(
            stderr.len() < 100_000,
            "{what}: {} bytes of messages",
            stderr.len()
        );
        measures.push((what, time, cpu, peak));
    }
    let report: Vec<String> = measures
        .iter()
        .map(|(what, time, cpu, peak)| {
            format!(
                "{what}: {time:.2?} wall, {cpu:.2?} processor, {} MB",
                peak / 1_000_000
            )
        })
        .collect();
    eprintln!("{}", report.join("\n"));
    for (what, _, cpu, peak) in measures {
        assert!(cpu.as_secs() < 10, "{what} took {cpu:?} of processor time");
        if cfg!(target_os = "linux") {
            assert!(peak < 200_000_000, "{what} took {peak} bytes");
        }
    }
}
