//! The certificate of the count of IRRs, as one sentence: in the JSON contract
//! (`irr.method`), the terminal-free memo and the pack alike.

use super::{percent, Style};
use crate::engine::Certificate;

/// One sentence saying how the count was established.
pub fn sentence(certificate: &Certificate) -> String {
    match *certificate {
        Certificate::Uncertified {
            count,
            undecided,
            descartes,
        } => format!(
            "Not certified: {count} root(s) found, but {undecided} interval(s) could not be decided in binary floating point; the sign-change bound is {descartes}."
        ),
        Certificate::ExactOverBudget {
            count,
            undecided,
            descartes,
        } => format!(
            "Not certified: {count} root(s) found in binary floating point, with {undecided} interval(s) undecided or roots too close to tell apart; the exact check (integer polynomial, square-free split, Descartes isolation) needed more than its work budget. The sign-change bound is {descartes}."
        ),
        Certificate::Exact { count, descartes } => format!(
            "Count {count} proven exactly: the NPV as an integer polynomial, its square-free split by integer gcds giving each multiplicity, and every root isolated by Descartes' rule of signs in exact integers. Sign-change bound of the flows: {descartes}."
        ),
        Certificate::NoSignChange => {
            "The flows never change sign, so no rate of return exists (Descartes' rule of signs).".to_string()
        }
        Certificate::Laguerre {
            count,
            annual_rate,
            descartes,
        } => format!(
            "Count {count} proven complete: each root lies where the NPV changes sign, found with rigorous rounding-error bounds, and with the flows discounted at an annual {} their partial sums change sign {count} time(s) taken forwards and backwards together, which bounds the roots above and below that rate (Laguerre's rule). Sign-change bound of the flows: {descartes}.",
            // (The sentence has always carried the terminal's figures.)
            percent(annual_rate, 2, Style::Terminal),
        ),
        Certificate::Enclosures {
            count,
            descartes,
            cumulative,
        } => {
            let norstrom = match cumulative {
                Some((a, b)) => format!(" Cumulative sums change sign {a} time(s) (bound above 0%) and backward sums {b} time(s) (bound below 0%)."),
                None => " The flows sum to zero, so 0% is a root.".to_string(),
            };
            format!(
                "Count {count} proven complete: every interval of rates was settled by enclosures with rigorous rounding-error bounds, and the count is within the sign-change bound {descartes} with the same parity (Descartes; Laguerre for uneven times).{norstrom}"
            )
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_certificate_reads_as_one_sentence() {
        // The wording of the JSON contract (docs/design.md, `irr.method`).
        let laguerre = Certificate::Laguerre {
            count: 2,
            annual_rate: 0.5,
            descartes: 2,
        };
        let text = sentence(&laguerre);
        assert!(text.starts_with("Count 2 proven complete"), "{text}");
        assert!(text.contains("an annual 50.00% their"), "{text}");
        let zero_sum = Certificate::Enclosures {
            count: 1,
            descartes: 1,
            cumulative: None,
        };
        assert!(sentence(&zero_sum).ends_with("so 0% is a root."));
        let open = Certificate::Uncertified {
            count: 1,
            undecided: 2,
            descartes: 3,
        };
        assert!(sentence(&open).starts_with("Not certified: 1 root(s) found, but 2 interval(s)"));
        assert!(sentence(&Certificate::NoSignChange).contains("never change sign"));
        let exact = Certificate::Exact {
            count: 2,
            descartes: 2,
        };
        assert!(sentence(&exact).starts_with("Count 2 proven exactly"));
        let over = Certificate::ExactOverBudget {
            count: 0,
            undecided: 1,
            descartes: 100,
        };
        assert!(sentence(&over).contains("more than its work budget"));
    }
}
