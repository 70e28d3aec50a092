//! The chi-squared distribution's upper tail, and Pearson's chi-squared test of
//! independence on a 2 × k table, as SciPy's
//! `scipy.stats.chi2_contingency(table, correction=False)` computes it (checked against
//! SciPy 1.17 in `tests/reference/fixtures/chi2.json`).
//!
//! Tail: P(X >= x) for X ~ χ²(ν) is the regularised upper incomplete gamma function
//! Q(ν/2, x/2), Q(a, x) = Γ(a, x) / Γ(a). It is evaluated as Press, Teukolsky, Vetterling
//! and Flannery, *Numerical Recipes*, 3rd ed. (2007), §6.2 describe (written here from
//! memory of that section, not copied): for x < a + 1 the series
//! P(a, x) = e^(-x) x^a / Γ(a) · Σ_n x^n / (a (a + 1) … (a + n)) and Q = 1 - P; otherwise
//! the continued fraction for Γ(a, x) (their `gcf`), evaluated by the modified Lentz
//! method. Unlike that section, large a is not handed to a quadrature: both expansions are
//! simply run longer (they need about √a terms), and the common factor e^(-x) x^a / Γ(a)
//! is computed in the form −a (d − ln(1 + d)) + ½ ln(a / 2π) − S(a), d = (x − a)/a, with
//! S the Stirling series of ln Γ, so that its error grows with |x − a| rather than with
//! a ln a (the usual device for large a, e.g. Temme's; common practice).
//!
//! Test (SciPy's rules): the expected count of cell (i, j) is row_i · column_j / N; the
//! statistic is Σ (observed − expected)² / expected; ν = (2 − 1)(k − 1); no continuity
//! (Yates) correction — SciPy applies one only when ν = 1 and `correction=True`, and this
//! module never does. SciPy refuses a table with an expected count of zero, so levels
//! with no row on either side are dropped before the test (the caller's job: see
//! [`pearson_2xk`]); with one level left (ν = 0) SciPy returns statistic 0 and p = 1.
//!
//! What it is not: a test of a hypothesis stated in advance (see [`crate::explain`]), or
//! a check that the expected counts are large enough for the χ² approximation (the caller
//! reports the smallest expected count instead).

/// Relative precision the expansions stop at.
const EPS: f64 = f64::EPSILON;
/// Smallest positive value Lentz's method guards divisions with.
const FPMIN: f64 = f64::MIN_POSITIVE / EPS;

/// Stirling's series S(a) = ln Γ(a) − ((a − ½) ln a − a + ½ ln 2π), for a >= 10:
/// Σ B_2k / (2k (2k − 1) a^(2k − 1)), k = 1 … 8 (Bernoulli numbers B_2 … B_16). The
/// next term is below 3e-18 at a = 10.
fn stirling_tail(a: f64) -> f64 {
    // B_2k / (2k (2k - 1)) for k = 8 down to 1 (as in ks.rs).
    const C: [f64; 8] = [
        -3617.0 / 122_400.0,
        1.0 / 156.0,
        -691.0 / 360_360.0,
        1.0 / 1188.0,
        -1.0 / 1680.0,
        1.0 / 1260.0,
        -1.0 / 360.0,
        1.0 / 12.0,
    ];
    let r = 1.0 / a;
    let r2 = r * r;
    r * C.iter().fold(0.0, |acc, &c| acc * r2 + c)
}

/// ln Γ(a) for a > 0: Stirling's series at a + n >= 10, shifted down by
/// ln Γ(a) = ln Γ(a + n) − ln(a (a + 1) … (a + n − 1)); below 10 for whole and half-whole
/// a, the product itself.
pub fn ln_gamma(a: f64) -> f64 {
    if a < 10.0 && (2.0 * a).fract() == 0.0 {
        // Whole and half-whole a (every χ² case): Γ(n) = (n − 1)!,
        // Γ(k + ½) = √π · ½ · (3/2) · … · (k − ½), a few roundings in all.
        let mut g = if a.fract() == 0.0 { 1.0 } else { std::f64::consts::PI.sqrt() };
        let mut z = a - 1.0;
        while z > 0.0 {
            g *= z;
            z -= 1.0;
        }
        return g.ln();
    }
    let mut shift = 0.0;
    let mut z = a;
    let mut prod = 1.0;
    while z < 10.0 {
        prod *= z;
        z += 1.0;
        if prod > 1e280 {
            shift += prod.ln();
            prod = 1.0;
        }
    }
    shift += prod.ln();
    (z - 0.5) * z.ln() - z + 0.5 * (2.0 * std::f64::consts::PI).ln() + stirling_tail(z) - shift
}

/// ln(e^(-x) x^a / Γ(a)), the factor both expansions share.
fn ln_prefactor(a: f64, x: f64) -> f64 {
    if a >= 10.0 {
        let d = (x - a) / a;
        // d − ln(1 + d) >= 0; for small |d| its series d²/2 − d³/3 + … keeps precision.
        let dm = if d.abs() < 1e-3 {
            d * d * (0.5 - d * (1.0 / 3.0 - d * (0.25 - d * 0.2)))
        } else {
            d - d.ln_1p()
        };
        -a * dm + 0.5 * (a / (2.0 * std::f64::consts::PI)).ln() - stirling_tail(a)
    } else {
        a * x.ln() - x - ln_gamma(a)
    }
}

/// Terms allowed before giving up (each expansion needs about √a terms, plus a few dozen).
fn max_terms(a: f64) -> usize {
    1000 + (50.0 * a.sqrt()) as usize
}

/// P(a, x) by its series (meant for x < a + 1).
fn series_p(a: f64, x: f64) -> f64 {
    let mut ap = a;
    let mut del = 1.0 / a;
    let mut sum = del;
    for _ in 0..max_terms(a) {
        ap += 1.0;
        del *= x / ap;
        sum += del;
        if del.abs() < sum.abs() * EPS {
            break;
        }
    }
    sum * ln_prefactor(a, x).exp()
}

/// Q(a, x) by the continued fraction (meant for x >= a + 1), modified Lentz.
fn fraction_q(a: f64, x: f64) -> f64 {
    let mut b = x + 1.0 - a;
    let mut c = 1.0 / FPMIN;
    let mut d = 1.0 / b;
    let mut h = d;
    for i in 1..=max_terms(a) {
        let an = -(i as f64) * (i as f64 - a);
        b += 2.0;
        d = an * d + b;
        if d.abs() < FPMIN {
            d = FPMIN;
        }
        c = b + an / c;
        if c.abs() < FPMIN {
            c = FPMIN;
        }
        d = 1.0 / d;
        let del = d * c;
        h *= del;
        if (del - 1.0).abs() <= EPS {
            break;
        }
    }
    ln_prefactor(a, x).exp() * h
}

/// The regularised upper incomplete gamma function Q(a, x) = Γ(a, x) / Γ(a), a > 0, x >= 0.
pub fn gamma_q(a: f64, x: f64) -> f64 {
    if !(a > 0.0) || !(x >= 0.0) {
        return f64::NAN;
    }
    if x == 0.0 {
        return 1.0;
    }
    if x.is_infinite() {
        return 0.0;
    }
    if x < a + 1.0 {
        (1.0 - series_p(a, x)).clamp(0.0, 1.0)
    } else {
        fraction_q(a, x).clamp(0.0, 1.0)
    }
}

/// P(X >= x) for X ~ χ²(dof), dof >= 1 (scipy.stats.chi2.sf).
pub fn chi2_sf(x: f64, dof: f64) -> f64 {
    if x.is_nan() || !(dof > 0.0) {
        return f64::NAN;
    }
    if x <= 0.0 {
        return 1.0;
    }
    gamma_q(dof / 2.0, x / 2.0)
}

/// Pearson's chi-squared test of independence.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Chi2Result {
    pub statistic: f64,
    pub dof: usize,
    pub p_value: f64,
    /// The smallest expected count over the table's cells.
    pub min_expected: f64,
}

/// The test on the 2 × k table whose rows are `a` and `b` (counts by level), as
/// `scipy.stats.chi2_contingency([a, b], correction=False)`. Every level must have a
/// count on at least one side, and both rows a positive total; `None` otherwise (SciPy
/// raises an error there, an expected count being zero).
pub fn pearson_2xk(a: &[u64], b: &[u64]) -> Option<Chi2Result> {
    assert_eq!(a.len(), b.len(), "rows of a 2 × k table have the same length");
    let k = a.len();
    let (na, nb) = (a.iter().sum::<u64>() as f64, b.iter().sum::<u64>() as f64);
    let n = na + nb;
    if k == 0 || na == 0.0 || nb == 0.0 || a.iter().zip(b).any(|(&x, &y)| x + y == 0) {
        return None;
    }
    let mut stat = 0.0;
    let mut min_expected = f64::INFINITY;
    // Row by row, as SciPy sums the flattened table (the order changes only rounding).
    for (row, total) in [(a, na), (b, nb)] {
        for j in 0..k {
            let col = (a[j] + b[j]) as f64;
            let e = total * col / n;
            let diff = row[j] as f64 - e;
            stat += diff * diff / e;
            min_expected = min_expected.min(e);
        }
    }
    let dof = k - 1;
    if dof == 0 {
        return Some(Chi2Result { statistic: 0.0, dof, p_value: 1.0, min_expected });
    }
    Some(Chi2Result { statistic: stat, dof, p_value: chi2_sf(stat, dof as f64), min_expected })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ln_gamma_at_known_points() {
        // Γ(1) = Γ(2) = 1, Γ(1/2) = √π, Γ(5) = 24, Γ(10.5) = 1133278.3889487855...
        // (the last from Γ(n + 1/2) = (2n)! √π / (4^n n!), n = 10).
        assert_eq!(ln_gamma(1.0), 0.0);
        assert_eq!(ln_gamma(2.0), 0.0);
        assert!((ln_gamma(0.5) - std::f64::consts::PI.sqrt().ln()).abs() < 1e-15);
        // Other a go through ln Γ(a + n) − ln(a … (a + n − 1)), values near 13: a few units
        // in their last place are the error to expect. Γ(1/3) = 2.678938534707747633...
        // (a classical constant, value from memory; Python's math.gamma(1/3) agrees).
        assert!((ln_gamma(1.0 / 3.0) - 2.678_938_534_707_747_6f64.ln()).abs() < 1e-14);
        assert!((ln_gamma(5.0) - 24f64.ln()).abs() < 1e-14);
        let g = (1..=20u32).fold(1.0f64, |p, i| p * i as f64) * std::f64::consts::PI.sqrt()
            / (4f64.powi(10) * (1..=10u32).fold(1.0f64, |p, i| p * i as f64));
        assert!((ln_gamma(10.5) - g.ln()).abs() < 1e-13);
    }

    #[test]
    fn closed_forms_for_one_and_two_degrees_of_freedom() {
        // χ²(2): sf = e^(-x/2) exactly. χ²(1): sf = erfc(√(x/2)); at x = 3.841458820694124
        // (the 95 % point) it is 0.05 (textbook table value, to the digits shown).
        // The tail is e^(ln(prefactor)), so its relative error is about x/2 units of
        // rounding (as in any evaluation through the logarithm).
        for &x in &[0.1, 1.0, 2.5, 10.0, 50.0, 700.0] {
            let want = (-x / 2.0f64).exp();
            let tol = (8.0 + x) * f64::EPSILON;
            assert!((chi2_sf(x, 2.0) - want).abs() <= tol * want, "x = {x}: {} vs {want}", chi2_sf(x, 2.0));
        }
        assert!((chi2_sf(3.841458820694124, 1.0) - 0.05).abs() < 1e-12);
        assert_eq!(chi2_sf(0.0, 3.0), 1.0);
    }

    #[test]
    fn two_by_two_by_hand() {
        // [[10, 20], [30, 40]]: N = 100, rows 30 / 70, columns 40 / 60; expected 12, 18,
        // 28, 42; statistic 4/12 + 4/18 + 4/28 + 4/42 = 0.79365079...
        let r = pearson_2xk(&[10, 20], &[30, 40]).unwrap();
        let want = 4.0 / 12.0 + 4.0 / 18.0 + 4.0 / 28.0 + 4.0 / 42.0;
        assert!((r.statistic - want).abs() < 1e-14);
        assert_eq!(r.dof, 1);
        assert_eq!(r.min_expected, 12.0);
        assert!(pearson_2xk(&[1, 0], &[2, 0]).is_none(), "a level with no rows is refused");
        assert!(pearson_2xk(&[0, 0], &[2, 3]).is_none());
        let one = pearson_2xk(&[5], &[7]).unwrap();
        assert_eq!((one.statistic, one.dof, one.p_value), (0.0, 0, 1.0));
    }
}
