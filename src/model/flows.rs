//! The engine's input: one series of exact cash flows on an integer clock.

use crate::model::DayCount;
use chrono::NaiveDate;
use rust_decimal::Decimal;
use serde::Serialize;

/// An exact amount as a binary float, within about two units in the last place (the
/// mantissa and the power of ten are each rounded once, then divided): faster than a
/// correctly rounded conversion, and the root finder's error bounds allow for it.
pub(crate) fn amount_f64(d: Decimal) -> f64 {
    const POW10: [f64; 29] = [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
        1e17, 1e18, 1e19, 1e20, 1e21, 1e22, 1e23, 1e24, 1e25, 1e26, 1e27, 1e28,
    ];
    // The hardware converts a 64-bit integer; a 128-bit one goes through a slow
    // software routine, needed only when the mantissa's top word is in use.
    let bytes = d.serialize();
    let word = |i: usize| u32::from_le_bytes([bytes[i], bytes[i + 1], bytes[i + 2], bytes[i + 3]]);
    let magnitude = if word(12) == 0 {
        ((u64::from(word(8)) << 32) | u64::from(word(4))) as f64
    } else {
        d.mantissa().unsigned_abs() as f64
    };
    let m = if d.is_sign_negative() {
        -magnitude
    } else {
        magnitude
    };
    m / POW10[(d.scale() as usize).min(28)]
}

/// One cash flow. Its time is `offset / Flows::units_per_year` years after the
/// series' start (offset 0: period 0, or the earliest dated flow).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct FlowPoint {
    /// Time since the first flow in clock units (periods, days, or day-count units).
    pub offset: i64,
    /// Exact amount in currency units; negative is money paid by the investor.
    pub amount: Decimal,
    /// Calendar date, when the flow has one (dated flows, or periodic with `start`).
    pub date: Option<NaiveDate>,
    /// Period number for periodic flows (0 for the first amount).
    pub period: Option<u32>,
    /// Free text from the deal file, if any.
    pub note: Option<String>,
}

/// A series of cash flows on an integer clock: times are exact rationals
/// `offset / units_per_year` years, so the NPV is a sparse polynomial in
/// `(1 + r)^(-1 / units_per_year)` and sign-change bounds apply exactly.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Flows {
    /// Flows in time order; flows at the same offset are netted and zero flows dropped
    /// by [`Flows::normalised`].
    pub points: Vec<FlowPoint>,
    /// Clock units per year: periods a year for periodic flows (1, 2, 4, 12, 52, 365),
    /// or the day-count denominator for dated flows (365, 360, 133590 for act/act-isda).
    pub units_per_year: u64,
    /// Periods a year when the flows are periodic; `None` for dated flows.
    pub periods_per_year: Option<u32>,
}

/// The peak exposure of amounts in time order: the most negative running total
/// (undiscounted) and the index of the flow where it is first reached; `None` when the
/// running total never goes below zero. Engine and presentation both read it here.
pub fn peak_exposure(amounts: impl IntoIterator<Item = Decimal>) -> Option<(Decimal, usize)> {
    let mut running = Decimal::ZERO;
    let mut peak: Option<(Decimal, usize)> = None;
    for (i, amount) in amounts.into_iter().enumerate() {
        running += amount;
        if running < peak.map_or(Decimal::ZERO, |(v, _)| v) {
            peak = Some((running, i));
        }
    }
    peak
}

impl Flows {
    /// Periodic flows: one amount a period from period 0, `per_year` periods a year.
    pub fn periodic(amounts: impl IntoIterator<Item = Decimal>, per_year: u32) -> Flows {
        Flows {
            points: amounts
                .into_iter()
                .enumerate()
                .map(|(i, amount)| FlowPoint {
                    offset: i as i64,
                    amount,
                    date: None,
                    period: Some(i as u32),
                    note: None,
                })
                .collect(),
            units_per_year: u64::from(per_year),
            periods_per_year: Some(per_year),
        }
    }

    /// Dated flows on a day count's clock, as deal files and batch lines both give
    /// them: each flow's offset counts the day count's units from the earliest date
    /// (the series' start) to its date, the latest date passed for the conventions
    /// that treat the last day of a series apart (30E/360 ISDA). In the given order.
    pub fn dated(flows: Vec<(NaiveDate, Decimal, Option<String>)>, day_count: DayCount) -> Flows {
        let first = flows.iter().map(|f| f.0).min();
        let last = flows.iter().map(|f| f.0).max();
        let points = flows
            .into_iter()
            .map(|(date, amount, note)| FlowPoint {
                offset: first.map_or(0, |f| day_count.units_in_series(f, date, last)),
                amount,
                date: Some(date),
                period: None,
                note,
            })
            .collect();
        Flows {
            points,
            units_per_year: day_count.units_per_year(),
            periods_per_year: None,
        }
    }

    /// The same flows sorted by offset, with flows at one offset netted (notes joined
    /// with "; ") and zero flows dropped, as the sign-change counts require.
    pub fn normalised(&self) -> Flows {
        self.clone().into_normalised()
    }

    /// [`Flows::normalised`] without the copy; free when the flows are already in
    /// order, one to an offset and non-zero (as batch series usually are).
    pub(crate) fn into_normalised(self) -> Flows {
        let ready = self.points.windows(2).all(|w| w[0].offset < w[1].offset)
            && self.points.iter().all(|p| !p.amount.is_zero());
        if ready {
            return self;
        }
        let mut pts = self.points;
        pts.sort_by_key(|p| p.offset);
        let mut out: Vec<FlowPoint> = Vec::with_capacity(pts.len());
        for p in pts {
            match out.last_mut() {
                Some(last) if last.offset == p.offset => {
                    last.amount += p.amount;
                    last.note = match (last.note.take(), p.note) {
                        (Some(a), Some(b)) => Some(format!("{a}; {b}")),
                        (a, b) => a.or(b),
                    };
                }
                _ => out.push(p),
            }
        }
        out.retain(|p| !p.amount.is_zero());
        Flows {
            points: out,
            units_per_year: self.units_per_year,
            periods_per_year: self.periods_per_year,
        }
    }

    /// Years from offset 0 (the series' start, to which NPVs are discounted) to point `i`.
    pub fn years(&self, i: usize) -> f64 {
        self.points[i].offset as f64 / self.units_per_year as f64
    }
}
