//! The torsion constant of a solid rectangular section (a ribbon of any width-to-thickness ratio).
//!
//! Saint-Venant's solution for a bar of width `w` and thickness `t` (w >= t) gives the torsion constant
//! `J = k(w/t) w t^3`, with
//!
//! `k = (1/3) [1 - (192 / pi^5) (t/w) sum_{n = 1, 3, 5, ...} tanh(n pi w / (2 t)) / n^5]`
//!
//! (Timoshenko and Goodier, Theory of Elasticity, the chapter on torsion of prismatic bars, the
//! rectangular cross-section; quoted from memory). `k` tends to 1/3 for a thin ribbon and is 0.1406 for a
//! square, so the thin-ribbon formula `w t^3 / 3` overstates a square section's constant by 137 % and a
//! 10:1 ribbon's by 6.7 %.

use std::f64::consts::PI;

/// Odd terms kept in the series. The n-th term is below `1 / n^5`, so after 200 odd terms (n = 399) the
/// rest adds less than `sum_{n > 399} 1/n^5 < 1e-11` to the bracket: far below any measured dimension.
const TERMS: usize = 200;

/// Saint-Venant's coefficient `k` in `J = k w t^3` for a rectangle of width `w` and thickness `t`, both
/// positive; the two may be given in either order (the longer side is taken as the width).
pub fn coefficient(w: f64, t: f64) -> f64 {
    let (long, short) = if w >= t { (w, t) } else { (t, w) };
    let ratio = long / short;
    let sum: f64 = (0..TERMS)
        .map(|i| (2 * i + 1) as f64)
        .map(|n| (n * PI * ratio / 2.0).tanh() / n.powi(5))
        .sum();
    (1.0 - 192.0 / PI.powi(5) / ratio * sum) / 3.0
}

/// The torsion constant `J = k w t^3` of the rectangle, m^4 (the long side counts as `w`).
pub fn torsion_constant(w: f64, t: f64) -> f64 {
    let (long, short) = if w >= t { (w, t) } else { (t, w) };
    coefficient(long, short) * long * short.powi(3)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The coefficient `k1` (here `k`) tabulated for rectangular bars in Timoshenko and Goodier, Theory of
    /// Elasticity (3rd ed., the rectangular cross-section table of the torsion chapter), the same values
    /// as Roark's Formulas for Stress and Strain gives for a solid rectangle; quoted from memory to three
    /// decimals, so the check allows half a unit in the last place.
    #[test]
    fn matches_the_handbook_table() {
        let table = [
            (1.0, 0.141),
            (1.5, 0.196),
            (2.0, 0.229),
            (2.5, 0.249),
            (3.0, 0.263),
            (4.0, 0.281),
            (5.0, 0.291),
            (10.0, 0.312),
        ];
        for (ratio, k) in table {
            let got = coefficient(ratio, 1.0);
            assert!(
                (got - k).abs() <= 0.0005 + 1e-12,
                "w/t = {ratio}: {got} vs {k}"
            );
        }
    }

    /// Roark's closed-form approximation for a solid rectangle (Roark's Formulas for Stress and Strain,
    /// 7th ed., Table 10.7 case 4; quoted from memory), written for the full width and thickness:
    /// `k = 1/3 - 0.21 (t/w) (1 - (t/w)^4 / 12)`. It is an approximation, within a few tenths of a per
    /// cent of the series over the whole range.
    #[test]
    fn agrees_with_the_closed_form_approximation() {
        for ratio in [1.0, 1.2, 2.0, 3.0, 5.0, 8.0, 20.0, 100.0] {
            let r: f64 = 1.0 / ratio;
            let approx = 1.0 / 3.0 - 0.21 * r * (1.0 - r.powi(4) / 12.0);
            let got = coefficient(ratio, 1.0);
            assert!(
                ((got - approx) / got).abs() < 0.005,
                "w/t = {ratio}: {got} vs {approx}"
            );
        }
    }

    #[test]
    fn thin_ribbon_limit_and_order_of_sides() {
        // For a very thin ribbon the coefficient tends to 1/3 - 0.21 t/w (the leading terms).
        let k = coefficient(1000.0, 1.0);
        assert!((k - (1.0 / 3.0 - 0.21e-3)).abs() < 2e-6, "{k}");
        assert_eq!(coefficient(3.0, 1.0), coefficient(1.0, 3.0));
        assert_eq!(torsion_constant(3e-3, 1e-4), torsion_constant(1e-4, 3e-3));
        // The 10:1 and square overstatements of the thin-ribbon formula.
        assert!(((1.0 / 3.0) / coefficient(10.0, 1.0) - 1.068).abs() < 0.001);
        assert!(((1.0 / 3.0) / coefficient(1.0, 1.0) - 2.371).abs() < 0.001);
    }
}
