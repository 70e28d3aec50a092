//! The two-sample Kolmogorov–Smirnov test, two-sided, with the p-value that SciPy's
//! `scipy.stats.ks_2samp(a, b, method='auto')` reports (checked against SciPy 1.17 in
//! `tests/reference/fixtures/ks.json`).
//!
//! Statistic: D = max over the pooled values x of |F_a(x) - F_b(x)|, the empirical
//! distribution functions counting values <= x (so ties are handled as a step).
//!
//! p-value, as SciPy chooses it:
//! - **exact** when both sizes are at most 10 000: the proportion of lattice paths from
//!   (0, 0) to (m, n) that leave the band |x/m - y/n| < D (Hodges 1958, after Drion,
//!   Gnedenko and Korolyuk), computed directly as the outside proportion by the recursion
//!   of Viehmann (2021, arXiv:2102.08037); for m = n the reflection sum
//!   2 Σ (-1)^(k+1) C(2n, n - k h) / C(2n, n) in a Horner form. If that fails to give a
//!   probability, the asymptotic method is used instead (as SciPy does).
//! - **asymptotic** otherwise: the one-sample two-sided distribution of D_N at
//!   N = round(m n / (m + n)), P(D_N >= D), computed as Simard and L'Ecuyer (2011,
//!   J. Stat. Softw. 39(11)) choose: the Ruben–Gambino closed forms near the ends,
//!   twice the one-sided exact tail (Birnbaum and Tingey 1951) where the two one-sided
//!   events cannot both happen or the tail is small, the Durbin matrix (1968) in the
//!   form of Marsaglia, Tsang and Wang (2003) for small N·D², and the Pelz–Good (1976)
//!   expansion for large N. Where Simard and L'Ecuyer use Pomeranz's exact recursion
//!   (N <= 140, 0.754693 < N·D² <= 4) this module uses the Durbin matrix, also exact.
//!
//! What it is not: a one-sided test, or a one-sample test against a named distribution.

/// Sizes up to which the exact method is tried (SciPy's `MAX_AUTO_N`).
pub const MAX_EXACT_N: usize = 10_000;

#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "camelCase")]
pub enum Method {
    Exact,
    Asymptotic,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KsResult {
    pub statistic: f64,
    pub p_value: f64,
    pub method: Method,
}

/// Two-sided two-sample test of samples `a` and `b` (NaN values are not allowed).
/// `None` when either sample is empty.
pub fn ks_2samp(a: &[f64], b: &[f64]) -> Option<KsResult> {
    let mut a = a.to_vec();
    let mut b = b.to_vec();
    a.sort_unstable_by(f64::total_cmp);
    b.sort_unstable_by(f64::total_cmp);
    // Walk both sorted samples, one distinct value at a time.
    let (mut i, mut j) = (0, 0);
    let mut steps = Vec::with_capacity(a.len() + b.len());
    while i < a.len() || j < b.len() {
        let x = match (a.get(i), b.get(j)) {
            (Some(&p), Some(&q)) => p.min(q),
            (Some(&p), None) => p,
            (None, Some(&q)) => q,
            (None, None) => unreachable!(),
        };
        while i < a.len() && a[i] == x {
            i += 1;
        }
        while j < b.len() && b[j] == x {
            j += 1;
        }
        steps.push((i, j));
    }
    from_steps(a.len(), b.len(), steps)
}

/// The test from the cumulative counts (values of `a` <= x, values of `b` <= x) at each
/// distinct pooled value x, in increasing x.
pub fn from_steps(n1: usize, n2: usize, steps: impl IntoIterator<Item = (usize, usize)>) -> Option<KsResult> {
    if n1 == 0 || n2 == 0 {
        return None;
    }
    let (mut max_s, mut min_s) = (f64::NEG_INFINITY, f64::INFINITY);
    for (c1, c2) in steps {
        let diff = c1 as f64 / n1 as f64 - c2 as f64 / n2 as f64;
        max_s = max_s.max(diff);
        min_s = min_s.min(diff);
    }
    let min_s = (-min_s).clamp(0.0, 1.0);
    let d = if min_s > max_s { min_s } else { max_s };
    Some(p_value(n1, n2, d))
}

fn gcd(mut a: u64, mut b: u64) -> u64 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

/// The p-value of statistic `d` for sizes `n1`, `n2`, by SciPy's `method='auto'` rule.
pub fn p_value(n1: usize, n2: usize, d: f64) -> KsResult {
    if n1.max(n2) <= MAX_EXACT_N {
        let g = gcd(n1 as u64, n2 as u64);
        let lcm = (n1 as u64 / g) * n2 as u64;
        let h = (d * lcm as f64).round_ties_even() as u64;
        let dq = h as f64 / lcm as f64;
        if h == 0 {
            return KsResult { statistic: dq, p_value: 1.0, method: Method::Exact };
        }
        let p = if n1 == n2 { outside_square(n1 as u64, h) } else { outside_band(n1 as u64, n2 as u64, g, h) };
        if (0.0..=1.0).contains(&p) {
            return KsResult { statistic: dq, p_value: p, method: Method::Exact };
        }
        return asymptotic(n1, n2, dq);
    }
    asymptotic(n1, n2, d)
}

fn asymptotic(n1: usize, n2: usize, d: f64) -> KsResult {
    let (m, n) = (n1.max(n2) as f64, n1.min(n2) as f64);
    let en = (m * n / (m + n)).round_ties_even() as u64;
    KsResult { statistic: d, p_value: kolmogorov_sf(en, d).clamp(0.0, 1.0), method: Method::Asymptotic }
}

/// P(D_{n,n} >= h / n) for two samples of equal size n: twice the alternating reflection
/// sum, each term divided by C(2n, n) and nested (Horner form) to avoid cancellation.
fn outside_square(n: u64, h: u64) -> f64 {
    let mut p = 0.0;
    let mut k = (n / h) as i64;
    while k >= 0 {
        let kh = k as u64 * h;
        let mut a = 1.0;
        for j in 0..h {
            // (n - kh - j) may reach zero or below for the outermost k: the term is then 0.
            a = (n as f64 - kh as f64 - j as f64) * a / (n as f64 + kh as f64 + j as f64 + 1.0);
        }
        p = a * (1.0 - p);
        k -= 1;
    }
    2.0 * p
}

/// The proportion of monotone lattice paths from (0, 0) to (m, n) that do not stay
/// strictly inside |x/m - y/n| < h / lcm(m, n), by the column recursion that carries the
/// outside proportion (Viehmann 2021), one sliding window of a column at a time.
fn outside_band(m: u64, n: u64, g: u64, h: u64) -> f64 {
    let (m, n) = if m < n { (n, m) } else { (m, n) };
    let (mg, ng) = ((m / g) as f64, (n / g) as f64);
    let hf = h as f64;
    let mut minj = 0usize;
    let mut maxj = ((hf / mg).ceil() as usize).min(n as usize + 1);
    let mut curlen = maxj - minj;
    let len = (2 * maxj + 2).min(n as usize + 1);
    let mut a = vec![1.0f64; len];
    a[minj..maxj].iter_mut().for_each(|v| *v = 0.0);
    for i in 1..=m {
        let (lastminj, lastlen) = (minj, curlen);
        let lo = ((ng * i as f64 - hf) / mg).floor() as i64 + 1;
        minj = (lo.max(0) as usize).min(n as usize);
        maxj = (((ng * i as f64 + hf) / mg).ceil() as usize).min(n as usize + 1);
        if maxj <= minj {
            return 1.0;
        }
        let fi = i as f64;
        let mut val = if minj == 0 { 0.0 } else { 1.0 };
        for jj in 0..maxj - minj {
            let j = (jj + minj) as f64;
            val = (a[jj + minj - lastminj] * fi + val * j) / (fi + j);
            a[jj] = val;
        }
        curlen = maxj - minj;
        if lastlen > curlen {
            a[curlen..lastlen].iter_mut().for_each(|v| *v = 1.0);
        }
    }
    a[maxj - minj - 1]
}

// ---------------------------------------------------------------------------------------
// One-sample two-sided Kolmogorov distribution, P(D_n >= x).

const E128: i32 = 128;
const P128: f64 = 3.402_823_669_209_385e38; // 2^128
const M128: f64 = 2.938_735_877_055_719e-39; // 2^-128

/// P(D_n >= x) for the two-sided one-sample statistic of a sample of size n.
pub fn kolmogorov_sf(n: u64, x: f64) -> f64 {
    if n == 0 || x.is_nan() {
        return f64::NAN;
    }
    let nf = n as f64;
    if x >= 1.0 {
        return 0.0;
    }
    if x <= 0.0 {
        return 1.0;
    }
    let t = nf * x;
    if t <= 1.0 {
        // Ruben and Gambino (1982): for 1/(2n) <= x <= 1/n, P(D_n < x) = n!/n^n (2t - 1)^n.
        if t <= 0.5 {
            return 1.0;
        }
        let cdf = if n <= 140 {
            (1..=n).fold(1.0, |p, i| p * (i as f64 / nf * (2.0 * t - 1.0)))
        } else {
            (log_nfactorial_div_n_pow_n(nf) + nf * (2.0 * t - 1.0).ln()).exp()
        };
        return (1.0 - cdf).clamp(0.0, 1.0);
    }
    if t >= nf - 1.0 {
        // Ruben and Gambino: P(D_n >= x) = 2 (1 - x)^n for x >= 1 - 1/n.
        return (2.0 * (1.0 - x).powf(nf)).clamp(0.0, 1.0);
    }
    if x >= 0.5 {
        return (2.0 * smirnov(n, x)).clamp(0.0, 1.0);
    }
    let nx2 = t * x;
    if n <= 140 {
        if nx2 <= 4.0 {
            return (1.0 - durbin_cdf(n, x)).clamp(0.0, 1.0);
        }
        return (2.0 * smirnov(n, x)).clamp(0.0, 1.0);
    }
    if nx2 >= 370.0 {
        return 0.0;
    }
    if nx2 >= 2.2 {
        return (2.0 * smirnov(n, x)).clamp(0.0, 1.0);
    }
    let cdf = if n <= 100_000 && nf * x.powf(1.5) <= 1.4 { durbin_cdf(n, x) } else { pelz_good_cdf(nf, x) };
    (1.0 - cdf).clamp(0.0, 1.0)
}

/// log(n! / n^n) by Stirling's series with the n log n term removed up front.
fn log_nfactorial_div_n_pow_n(n: f64) -> f64 {
    // B_{2j} / (2j (2j - 1)) for j = 8 down to 1.
    const C: [f64; 8] = [
        -2.955_065_359_477_124e-2,
        6.410_256_410_256_41e-3,
        -1.917_526_917_526_917_6e-3,
        8.417_508_417_508_417e-4,
        -5.952_380_952_380_952e-4,
        7.936_507_936_507_937e-4,
        -2.777_777_777_777_778e-3,
        8.333_333_333_333_333e-2,
    ];
    let rn = 1.0 / n;
    let x = rn / n;
    let poly = C.iter().fold(0.0, |acc, &c| acc * x + c);
    n.ln() / 2.0 - n + (2.0 * std::f64::consts::PI).ln() / 2.0 + rn * poly
}

/// P(D_n+ >= x), the one-sided exact tail (Birnbaum and Tingey 1951):
/// x Σ_{j=0}^{⌊n(1-x)⌋} C(n, j) (1 - x - j/n)^(n-j) (x + j/n)^(j-1), summed in logarithms
/// (every term is positive).
pub fn smirnov(n: u64, x: f64) -> f64 {
    if x <= 0.0 {
        return 1.0;
    }
    if x >= 1.0 {
        return 0.0;
    }
    let nf = n as f64;
    let top = (nf * (1.0 - x)).floor() as u64;
    let mut logs = Vec::with_capacity(top as usize + 1);
    let mut log_c = 0.0; // ln C(n, j)
    for j in 0..=top {
        if j > 0 {
            log_c += ((n - j + 1) as f64 / j as f64).ln();
        }
        let jf = j as f64;
        let left = 1.0 - x - jf / nf;
        let e = n - j;
        let a = if e == 0 {
            0.0
        } else if left <= 0.0 {
            f64::NEG_INFINITY
        } else {
            e as f64 * left.ln()
        };
        let b = (jf - 1.0) * (x + jf / nf).ln();
        logs.push(log_c + a + b);
    }
    let top_log = logs.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    if top_log == f64::NEG_INFINITY {
        return 0.0;
    }
    let s: f64 = logs.iter().map(|l| (l - top_log).exp()).sum();
    (x.ln() + top_log + s.ln()).exp()
}

/// P(D_n < x) by Durbin's matrix (1968) as Marsaglia, Tsang and Wang (2003) compute it:
/// with x = (k - h)/n, the (k, k) entry of n!/n^n H^n for an (2k-1)-square matrix H,
/// powered by squaring with the exponent kept apart to avoid overflow.
fn durbin_cdf(n: u64, d: f64) -> f64 {
    let nd = n as f64 * d;
    if d >= 1.0 {
        return 1.0;
    }
    if nd <= 0.5 {
        return 0.0;
    }
    let k = nd.ceil() as usize;
    let h = k as f64 - nd;
    let m = 2 * k - 1;
    let mut v = vec![0.0; m];
    let mut w = vec![0.0; m];
    let mut fac = 1.0;
    for j in 1..=m {
        w[j - 1] = fac;
        fac /= j as f64;
        v[j - 1] = (1.0 - h.powi(j as i32)) * fac;
    }
    let tt = (2.0 * h - 1.0).max(0.0).powi(m as i32) - 2.0 * h.powi(m as i32);
    v[m - 1] = (1.0 + tt) * fac;
    let mut hm = vec![0.0; m * m];
    for i in 1..m {
        for r in i - 1..m {
            hm[r * m + i] = w[r + 1 - i];
        }
    }
    for r in 0..m {
        hm[r * m] = v[r];
    }
    for c in 0..m {
        hm[(m - 1) * m + c] = v[m - 1 - c];
    }
    let mut pw = vec![0.0; m * m];
    for i in 0..m {
        pw[i * m + i] = 1.0;
    }
    let (mut nn, mut expnt, mut hexp) = (n, 0i32, 0i32);
    let matmul = |a: &[f64], b: &[f64]| {
        let mut c = vec![0.0; m * m];
        for i in 0..m {
            for l in 0..m {
                let x = a[i * m + l];
                if x != 0.0 {
                    for j in 0..m {
                        c[i * m + j] += x * b[l * m + j];
                    }
                }
            }
        }
        c
    };
    while nn > 0 {
        if nn % 2 == 1 {
            pw = matmul(&pw, &hm);
            expnt += hexp;
        }
        hm = matmul(&hm, &hm);
        hexp *= 2;
        if hm[(k - 1) * m + k - 1].abs() > P128 {
            hm.iter_mut().for_each(|x| *x /= P128);
            hexp += E128;
        }
        nn /= 2;
    }
    let mut p = pw[(k - 1) * m + k - 1];
    let nf = n as f64;
    for i in 1..=n {
        p = i as f64 * p / nf;
        if p.abs() < M128 {
            p *= P128;
            expnt -= E128;
        }
    }
    if expnt != 0 {
        p *= 2f64.powi(expnt);
    }
    p.clamp(0.0, 1.0)
}

/// P(D_n < x) by the Pelz–Good (1976) expansion in 1/sqrt(n) to the n^(-3/2) term,
/// z = x sqrt(n), in the theta-function form suited to small z (Simard and L'Ecuyer 2011).
fn pelz_good_cdf(n: f64, x: f64) -> f64 {
    use std::f64::consts::PI;
    if x <= 0.0 {
        return 0.0;
    }
    if x >= 1.0 {
        return 1.0;
    }
    let z = n.sqrt() * x;
    let (z2, z3, z4, z6) = (z * z, z.powi(3), z.powi(4), z.powi(6));
    let (pi2, pi4, pi6) = (PI * PI, PI.powi(4), PI.powi(6));
    let qlog = -pi2 / 8.0 / z2;
    if qlog < -708.0 {
        return 0.0;
    }
    let q = qlog.exp();
    let k1a = -z2;
    let k1b = pi2 / 4.0;
    let k2a = 6.0 * z6 + 2.0 * z4;
    let k2b = (2.0 * z4 - 5.0 * z2) * pi2 / 4.0;
    let k2c = pi4 * (1.0 - 2.0 * z2) / 16.0;
    let k3d = pi6 * (5.0 - 30.0 * z2) / 64.0;
    let k3c = pi4 * (-60.0 * z2 + 212.0 * z4) / 16.0;
    let k3b = pi2 * (135.0 * z4 - 96.0 * z6) / 4.0;
    let k3a = -30.0 * z6 - 90.0 * z.powi(8);
    let mut k = [0.0f64; 4];
    let maxk = (16.0 * z / PI).ceil() as i64;
    // Horner over the odd integers m = 2k - 1: Σ c(m) q^(m^2).
    for kk in (1..=maxk).rev() {
        let m = (2 * kk - 1) as f64;
        let (m2, m4, m6) = (m * m, m.powi(4), m.powi(6));
        let qp = q.powi((8 * kk) as i32);
        let c = [1.0, k1a + k1b * m2, k2a + k2b * m2 + k2c * m4, k3a + k3b * m2 + k3c * m4 + k3d * m6];
        for i in 0..4 {
            k[i] = k[i] * qp + c[i];
        }
    }
    let root2pi = (2.0 * PI).sqrt();
    let div = [z, 6.0 * z4, 72.0 * z.powi(7), 6480.0 * z.powi(10)];
    for i in 0..4 {
        k[i] *= q * root2pi / div[i];
    }
    // The terms over all integers k for K2 and K3.
    let q2 = (-pi2 / 2.0 / z2).exp();
    let (mut s2, mut s3) = (0.0, 0.0);
    for kk in (1..=maxk).rev() {
        let kf = kk as f64;
        let qp = q2.powf(kf * kf);
        s2 += kf * kf * qp;
        let (a, b) = (3f64.sqrt() * z + PI * kf, 3f64.sqrt() * z - PI * kf);
        s3 += a * b * kf * kf * qp;
    }
    k[2] += s2 * pi2 * root2pi / (-36.0 * z3);
    k[3] += s3 * pi2 * root2pi / (216.0 * z6);
    (0..4).map(|i| k[i] / n.powf(i as f64 / 2.0)).sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn durbin_and_pelz_good_agree_where_both_apply() {
        // Both approximate the same P(D_n < x); Simard and L'Ecuyer (2011) report the
        // Pelz-Good error below 1e-5 for n >= 140 in the range where they switch.
        for &(n, x) in &[(1000u64, 0.03), (5000, 0.012), (20_000, 0.006)] {
            let a = durbin_cdf(n, x);
            let b = pelz_good_cdf(n as f64, x);
            assert!((a - b).abs() < 1e-5, "n={n} x={x}: {a} vs {b}");
        }
    }

    #[test]
    fn smirnov_small_case_by_hand() {
        // n = 1: P(D_1+ >= x) = 1 - x (one point, uniform). n = 2, x = 0.6: the sum has j = 0
        // only: x (1 - x)^2 / x = (1 - x)^2 = 0.16.
        assert!((smirnov(1, 0.3) - 0.7).abs() < 1e-15);
        assert!((smirnov(2, 0.6) - 0.16).abs() < 1e-15);
    }

    #[test]
    fn equal_sizes_exact_by_enumeration() {
        // n = 3, h = 3 (D = 1): the two paths that go all one way first, of C(6, 3) = 20.
        assert!((outside_square(3, 3) - 2.0 / 20.0).abs() < 1e-15);
        // The band method gives the same number for equal sizes.
        assert!((outside_band(3, 3, 3, 3) - 0.1).abs() < 1e-15);
    }
}
