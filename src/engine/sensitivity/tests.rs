//! Tests of the sensitivity: break-even factors put back into the deal, tornado values
//! against the engine's NPV of the moved deal, the hurdle band against the exact NPV's
//! sign, and a count map whose double root is known in closed form.

use super::count_map::ChangeCause;
use super::*;
use crate::engine::figures::npv_sign;
use crate::engine::npv_at_hurdle;

fn dec(s: &str) -> Decimal {
    s.parse().expect("decimal")
}

fn yearly(amounts: &[&str]) -> Flows {
    Flows::periodic(amounts.iter().map(|a| dec(a)), 1)
}

fn rates(h: &str) -> Rates {
    Rates {
        hurdle: dec(h),
        finance: dec(h),
        reinvestment: dec(h),
    }
}

/// A small deterministic generator (64-bit LCG, common practice).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 33
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
}

/// Deal-like series: an outlay, income, sometimes an overhaul and a closing cost.
fn random_deal(rng: &mut Lcg) -> Flows {
    let n = 3 + rng.below(30) as usize;
    let mut v = Vec::with_capacity(n);
    for k in 0..n {
        let cents = 10_000 + rng.below(1_000_000) as i64;
        let amount = if k == 0 || (k > 2 && rng.below(6) == 0) || (k == n - 1 && rng.below(2) == 0)
        {
            -cents * (1 + rng.below(6) as i64)
        } else {
            cents
        };
        v.push(Decimal::new(amount, 2));
    }
    let per_year = [1, 2, 4, 12][rng.below(4) as usize];
    Flows::periodic(v, per_year)
}

#[test]
fn break_even_factors_put_back_give_an_npv_within_a_cent_of_zero() {
    let mut rng = Lcg(14);
    let mut found = 0;
    for _ in 0..200 {
        let flows = random_deal(&mut rng);
        let comps = v1_components(&flows);
        let hurdle = Decimal::new(rng.below(2000) as i64, 4);
        let s = sensitivity(
            &comps,
            &rates(&hurdle.to_string()),
            &SensitivityOptions::default(),
        );
        for (i, b) in s.break_even.iter().enumerate() {
            if let BreakEvenOutcome::At { factor, .. } = b.outcome {
                let mut m = vec![Decimal::ONE; comps.len()];
                m[i] = factor;
                let moved = moved_deal(&comps, &m, 0).expect("in range");
                let npv = npv_at_hurdle(&moved, hurdle).0.expect("npv");
                assert!(npv.abs() <= dec("0.01"), "{npv} at factor {factor}");
                found += 1;
            }
        }
    }
    assert!(found > 100, "only {found} break-evens");
}

#[test]
fn tornado_values_are_the_engines_npv_of_the_moved_deal() {
    let mut rng = Lcg(7);
    for _ in 0..60 {
        let flows = random_deal(&mut rng);
        let comps = v1_components(&flows);
        let hurdle = Decimal::new(rng.below(2500) as i64, 4);
        let s = sensitivity(
            &comps,
            &rates(&hurdle.to_string()),
            &SensitivityOptions::default(),
        );
        assert_eq!(
            s.npv_at_hurdle,
            npv_at_hurdle(&flows.normalised(), hurdle).0
        );
        for bar in &s.tornado {
            for (k, mv) in bar.moves.iter().enumerate() {
                let step = SensitivityOptions::default().steps.get(k).copied();
                let expected = match bar.kind {
                    MoveKind::Component => {
                        let i = comps.iter().position(|c| c.key == bar.key).expect("key");
                        let mut m = vec![Decimal::ONE; comps.len()];
                        m[i] = Decimal::ONE + step.expect("step");
                        npv_at_hurdle(&moved_deal(&comps, &m, 0).expect("moved"), hurdle).0
                    }
                    MoveKind::HurdleRate => {
                        let h = hurdle * (Decimal::ONE + step.expect("step"));
                        npv_at_hurdle(&flows.normalised(), h).0
                    }
                    MoveKind::InflowDelay => {
                        // The inflows one period later, built by hand (the
                        // normalisation sorts and nets them again).
                        let mut moved = flows.normalised();
                        for p in &mut moved.points {
                            if p.amount > Decimal::ZERO {
                                p.offset += 1;
                            }
                        }
                        npv_at_hurdle(&moved.into_normalised(), hurdle).0
                    }
                };
                assert_eq!(mv.npv, expected, "{} move {k}", bar.key);
            }
        }
        // Ranked by swing.
        let swings: Vec<_> = s.tornado.iter().map(|b| b.swing.expect("swing")).collect();
        assert!(swings.windows(2).all(|w| w[0] >= w[1]));
    }
}

#[test]
fn the_hurdle_band_agrees_with_the_sign_of_the_npv() {
    let mut rng = Lcg(99);
    let mut checked = 0;
    for _ in 0..150 {
        let flows = random_deal(&mut rng).normalised();
        let band = hurdle_band(&flows, 0.1);
        if !band.certified {
            continue;
        }
        let inside = |r: f64| {
            band.ranges.iter().any(|b| {
                b.from
                    .as_ref()
                    .is_none_or(|e| e.interval.is_some_and(|[_, hi]| r > hi))
                    && b.to
                        .as_ref()
                        .is_none_or(|e| e.interval.is_none_or(|[lo, _]| r < lo))
            })
        };
        let roots = irr::irr_report(&flows, Some(0.1), false);
        let near_root = |r: f64| {
            roots
                .roots
                .iter()
                .any(|x| x.annual_rate.is_some_and(|a| (a - r).abs() < 1e-6))
        };
        for k in 0..200 {
            let r = -0.95 + 0.02 * k as f64;
            if near_root(r) {
                continue;
            }
            let sign = npv_sign(&flows, r);
            if sign == 0 {
                continue;
            }
            assert_eq!(inside(r), sign > 0, "rate {r} flows {:?}", flows.points);
            checked += 1;
        }
    }
    assert!(checked > 10_000);
}

#[test]
fn a_hurdle_band_reads_the_pump() {
    // Lorie and Savage (1955) pump, flows from memory: IRRs 25% and 400%, NPV > 0
    // between them (the NPV is -1600 + 10000 v - 10000 v^2, v = 1 / (1 + r)).
    let band = hurdle_band(&yearly(&["-1600", "10000", "-10000"]), 0.1);
    assert!(band.certified);
    assert_eq!(band.ranges.len(), 1);
    let from = band.ranges[0]
        .from
        .as_ref()
        .expect("from")
        .annual_rate
        .expect("rate");
    let to = band.ranges[0]
        .to
        .as_ref()
        .expect("to")
        .annual_rate
        .expect("rate");
    assert!((from - 0.25).abs() < 1e-12 && (to - 4.0).abs() < 1e-9);
    assert!(!band.hurdle_inside);
}

#[test]
fn the_count_map_finds_a_double_root_at_a_known_factor() {
    // -100 + 200 f v - 121 v^2 (v = 1 / (1 + r)) has a double root where the
    // discriminant (200 f)^2 - 4 * 100 * 121 is zero: f = 1.1, at v = 10/11, r = 10%
    // (elementary algebra). Below it no real IRR, above it two.
    let comps = v1_components(&yearly(&["-100", "200", "-121"]));
    let s = sensitivity(&comps, &rates("0.1"), &SensitivityOptions::default());
    let map = s
        .count_map
        .iter()
        .find(|m| m.key == "inflows")
        .expect("map");
    assert!(map.certified && map.status == MapStatus::Mapped);
    assert_eq!(map.change_points.len(), 1, "{map:?}");
    let p = &map.change_points[0];
    assert!(p.certified);
    assert!(p.interval[0] <= 1.1 && 1.1 <= p.interval[1], "{p:?}");
    assert!(p.interval[1] - p.interval[0] < 1e-9);
    assert_eq!((p.count_below, p.count_above), (0, 2));
    assert!((p.annual_rate.expect("rate") - 0.1).abs() < 1e-9);
    assert_eq!(p.causes, [ChangeCause::DoubleRoot]);
    // The outflows: 200 v - g (100 + 121 v^2) has its double root at g = 10/11.
    let map = s
        .count_map
        .iter()
        .find(|m| m.key == "outflows")
        .expect("map");
    assert_eq!(map.change_points.len(), 1, "{map:?}");
    let p = &map.change_points[0];
    let g = 10.0 / 11.0;
    assert!(p.interval[0] <= g && g <= p.interval[1]);
    assert_eq!((p.count_below, p.count_above), (2, 0));
    // Break-even of the inflows at 10%: -100 + 200 f / 1.1 - 121 / 1.21 = 0, f = 1.1.
    let be = s
        .break_even
        .iter()
        .find(|b| b.key == "inflows")
        .expect("inflows");
    match &be.outcome {
        BreakEvenOutcome::At { factor, .. } => {
            assert!((*factor - dec("1.1")).abs() < dec("1e-20"), "{factor}")
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn the_count_map_of_dated_flows_takes_the_sparse_sums() {
    // The same -100, 200 f, -121 dated on 1 January a year apart under act/act-isda: each
    // interval is one year exactly (ISDA 2006 4.16(b); methods.md, Day counts), so the
    // double root is again at f = 1.1 and 10%, and the clock (133,590 units a year)
    // spreads the exponents too wide for the dense sums.
    let date = |y| chrono::NaiveDate::from_ymd_opt(y, 1, 1).expect("date");
    let flows = Flows::dated(
        vec![
            (date(2027), dec("-100"), None),
            (date(2028), dec("200"), None),
            (date(2029), dec("-121"), None),
        ],
        crate::model::DayCount::ActActIsda,
    );
    let s = sensitivity(
        &v1_components(&flows),
        &rates("0.1"),
        &SensitivityOptions::default(),
    );
    let map = s
        .count_map
        .iter()
        .find(|m| m.key == "inflows")
        .expect("map");
    assert!(map.certified, "{map:?}");
    let p = &map.change_points[0];
    assert!(p.interval[0] <= 1.1 && 1.1 <= p.interval[1], "{p:?}");
    assert!((p.annual_rate.expect("rate") - 0.1).abs() < 1e-9);
    // The delay of the inflows on a dated clock is one year.
    let delay = s
        .tornado
        .iter()
        .find(|b| b.kind == MoveKind::InflowDelay)
        .expect("delay");
    assert_eq!(delay.moves[0].step, 1.0);
}

#[test]
fn the_count_map_sees_a_root_leave_through_minus_one_hundred_percent() {
    // -100 + 50 v + 60 v^2 with the last flow made of the rest's -30 and the
    // component's +60 f... built as three components: the last net flow changes sign
    // at f = 0.5 exactly, and one IRR appears or leaves there.
    let clock = |amounts: &[(i64, &str)]| Flows {
        points: amounts
            .iter()
            .map(|&(o, a)| FlowPoint {
                offset: o,
                amount: dec(a),
                date: None,
                period: None,
                note: None,
            })
            .collect(),
        units_per_year: 1,
        periods_per_year: Some(1),
    };
    let comps = vec![
        Component {
            key: "build".into(),
            label: "build".into(),
            flows: clock(&[(0, "-100"), (2, "-30")]),
        },
        Component {
            key: "sales".into(),
            label: "sales".into(),
            flows: clock(&[(1, "150"), (2, "60")]),
        },
    ];
    let s = sensitivity(&comps, &rates("0.08"), &SensitivityOptions::default());
    let map = s.count_map.iter().find(|m| m.key == "sales").expect("map");
    assert!(map.certified, "{map:?}");
    let last = map
        .change_points
        .iter()
        .find(|p| p.causes.contains(&ChangeCause::LastFlow))
        .expect("last flow");
    assert!(last.interval[0] <= 0.5 && 0.5 <= last.interval[1]);
    // Each interval's count is the engine's count at a factor inside it.
    for i in &map.intervals {
        let f = Decimal::from_f64((i.from + i.to) / 2.0)
            .expect("f")
            .round_dp(6);
        let deal = moved_deal(&comps, &[Decimal::ONE, f], 0).expect("deal");
        assert_eq!(irr::roots_of(&deal).count(), i.count, "{i:?}");
    }
}

/// Components of a deal on one yearly or quarterly clock: two to four parts, each a
/// few flows of either sign in cents, some at the same times as others.
fn components() -> impl proptest::strategy::Strategy<Value = Vec<Component>> {
    use proptest::prelude::*;
    let part = prop::collection::vec((0i64..12, -500_000i64..500_000), 1..6);
    (
        prop::collection::vec(part, 2..5),
        prop::sample::select(vec![1u32, 4]),
    )
        .prop_map(|(parts, per_year)| {
            parts
                .into_iter()
                .enumerate()
                .map(|(i, flows)| Component {
                    key: format!("part_{i}"),
                    label: format!("part {i}"),
                    flows: Flows {
                        points: flows
                            .into_iter()
                            .filter(|f| f.1 != 0)
                            .map(|(o, c)| FlowPoint {
                                offset: o,
                                amount: Decimal::new(c, 2),
                                date: None,
                                period: None,
                                note: None,
                            })
                            .collect(),
                        units_per_year: u64::from(per_year),
                        periods_per_year: Some(per_year),
                    }
                    .into_normalised(),
                })
                .filter(|c| !c.flows.points.is_empty())
                .collect()
        })
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(128))]

    /// On any decomposition: each break-even put back gives an NPV within a cent of
    /// zero, and each certified interval of a count map has the engine's count at a
    /// factor inside it (and the counts beside a change point differ).
    #[test]
    fn break_even_and_count_map_hold_for_any_components(
        comps in components(),
        hurdle in 0u32..2000,
    ) {
        proptest::prop_assume!(comps.len() >= 2);
        let h = Decimal::new(i64::from(hurdle), 4);
        let s = sensitivity(&comps, &rates(&h.to_string()), &SensitivityOptions::default());
        for (i, b) in s.break_even.iter().enumerate() {
            if let BreakEvenOutcome::At { factor, .. } = b.outcome {
                let mut m = vec![Decimal::ONE; comps.len()];
                m[i] = factor;
                let moved = moved_deal(&comps, &m, 0).expect("in range");
                let npv = npv_at_hurdle(&moved, h).0.expect("npv");
                proptest::prop_assert!(npv.abs() <= dec("0.01"), "{} at {}", npv, factor);
            }
        }
        for (i, map) in s.count_map.iter().enumerate() {
            for iv in map.intervals.iter().filter(|iv| iv.certified) {
                let mid = (iv.from + iv.to) / 2.0;
                let Some(f) = (0..=12).find_map(|dp| {
                    let d = Decimal::from_f64(mid)?.round_dp(dp);
                    let v = d.to_f64()?;
                    (v > iv.from && v < iv.to).then_some(d)
                }) else { continue };
                let mut m = vec![Decimal::ONE; comps.len()];
                m[i] = f;
                let deal = moved_deal(&comps, &m, 0).expect("in range");
                let set = irr::roots_of(&deal);
                if set.certified {
                    proptest::prop_assert_eq!(set.count(), iv.count, "{:?} at {}", map.key, f);
                }
            }
            for p in &map.change_points {
                proptest::prop_assert_ne!(p.count_below, p.count_above);
                proptest::prop_assert!(p.interval[0] <= p.factor && p.factor <= p.interval[1]);
            }
        }
    }
}
