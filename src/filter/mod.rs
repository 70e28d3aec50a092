//! Filter (lens) functions: one real value per point, which the cover then slices.
//!
//! Each filter here reads the scaled points (or, for [`Lens::Column`], a raw column) and
//! nothing else. Filters whose exact value costs O(n²) switch to a stated estimate above
//! [`EXACT_LIMIT`] points; each says how far the estimate can be from the exact value.

pub mod knn;
pub mod linalg;

use ndarray::ArrayView2;

use crate::error::{Error, Result};
use crate::points::Points;
use crate::rng::SplitMix64;
use crate::settings::{Lens, Settings, Spread};
use crate::table::Table;

/// Above this many points, O(n²) filters use a seeded subsample of this many reference points.
pub const EXACT_LIMIT: usize = 4000;

/// The lens value of every point, in point order.
pub fn compute_lens(table: &Table, points: &Points, s: &Settings) -> Result<Vec<f64>> {
    compute_lens_of(table, points, &s.lens, s, "lens")
}

/// The second lens's values (`s.lens2`), if there is one.
pub fn compute_lens2(table: &Table, points: &Points, s: &Settings) -> Result<Option<Vec<f64>>> {
    s.lens2.as_ref().map(|l| compute_lens_of(table, points, l, s, "lens2")).transpose()
}

/// The values of `lens` at every point; errors about its fields name them under `field`
/// ("lens" or "lens2").
pub fn compute_lens_of(table: &Table, points: &Points, lens: &Lens, s: &Settings, field: &str) -> Result<Vec<f64>> {
    let x = points.data.view();
    let out = match lens {
        Lens::Column { column } => {
            let raw = table.numbers(column, &format!("{field}.column"))?;
            // Under the median policy, the median of the rows the row condition keeps, as
            // the points' own columns take it ([`crate::points`]).
            let median_among = s.keep_rows.is_some() && s.missing.policy_for(column) == crate::settings::MissingPolicy::Median;
            let kept = if median_among { crate::subset::select(table, s)? } else { None };
            let col = crate::missing::ColumnValues::among(column, raw, &s.missing, kept.as_ref().map(|k| &k.keep[..]));
            // Rows without a value (and no fill) are not points, so `get` always answers.
            Ok(points.rows.iter().map(|&r| col.get(r as usize).unwrap_or(f64::NAN)).collect())
        }
        Lens::Principal { component } => principal_scores(x, *component),
        Lens::Density { bandwidth } => density_estimate(x, *bandwidth, EXACT_LIMIT, s.seed),
        Lens::Eccentricity { norm } => eccentricity_estimate(x, *norm, EXACT_LIMIT, s.seed),
        Lens::DistanceToMeasure { k } => knn::knn_lens(x, *k, knn::KnnValue::DistanceToMeasure),
        Lens::NeighbourDistance { k } => knn::knn_lens(x, *k, knn::KnnValue::KthDistance),
        // The largest distance to any point is eccentricity with p = infinity: the same code.
        Lens::LInfinityCentrality => eccentricity_estimate(x, Spread::Max, EXACT_LIMIT, s.seed),
    };
    out.map_err(|e| match e {
        Error::Settings { field: f, message } if field != "lens" && f.starts_with("lens.") => {
            Error::settings(format!("{field}.{}", &f["lens.".len()..]), message)
        }
        e => e,
    })
}

/// Scores on principal component `component` (1 = largest variance): the centred points
/// projected on the covariance matrix's eigenvector (Pearson 1901; the same scores as
/// scikit-learn's `PCA.transform` up to the sign of each component). The sign is fixed so
/// that the eigenvector's largest-magnitude loading is positive.
pub fn principal_scores(x: ArrayView2<f64>, component: usize) -> Result<Vec<f64>> {
    let (n, d) = x.dim();
    check_component(component, d, n)?;
    let cov = linalg::covariance(x, 1);
    let v = principal_axis(&cov, component);
    let mu = linalg::column_means(x).to_vec();
    Ok(x.rows().into_iter().map(|r| project(&r.to_vec(), &mu, &v)).collect())
}

/// The checks of [`principal_scores`] before any work: the component exists among `d`
/// columns, and there are at least 2 of `n` points.
pub fn check_component(component: usize, d: usize, n: usize) -> Result<()> {
    if component == 0 || component > d {
        return Err(Error::settings(
            "lens.component",
            format!("component {component} does not exist: {d} column(s) give components 1 to {d}"),
        ));
    }
    if n < 2 {
        return Err(Error::Data("principal components need at least 2 rows".into()));
    }
    Ok(())
}

/// The unit eigenvector of principal component `component` of a covariance matrix, sign
/// fixed as [`linalg::symmetric_eigen`] fixes it.
pub fn principal_axis(cov: &ndarray::Array2<f64>, component: usize) -> Vec<f64> {
    let (_, vecs) = linalg::symmetric_eigen(cov);
    vecs.column(component - 1).to_vec()
}

/// One point's score: its centred values (`row` - `mu`) projected on `v`.
pub fn project(row: &[f64], mu: &[f64], v: &[f64]) -> f64 {
    row.iter().zip(mu).zip(v).map(|((a, m), w)| (a - m) * w).sum()
}

/// Exact Gaussian kernel density at every point, as SciPy's `gaussian_kde` defines it:
/// kernel covariance = the data covariance (ddof = 1) times `bandwidth`², with Scott's
/// factor n^(-1/(d+4)) when `bandwidth` is `None`; value = mean over points of the
/// normal density. O(n² d).
pub fn density(x: ArrayView2<f64>, bandwidth: Option<f64>) -> Result<Vec<f64>> {
    density_estimate(x, bandwidth, usize::MAX, 0)
}

/// The point indices among `n` that the O(n²) filters sum over: all of them up to
/// `limit`, else a seeded subsample of `limit` (increasing).
pub fn reference_points(n: usize, limit: usize, seed: u64) -> Vec<usize> {
    if n > limit { SplitMix64::new(seed).sample_indices(n, limit) } else { (0..n).collect() }
}

/// The Gaussian kernel of [`density_estimate`]: the Cholesky factor of the kernel
/// covariance and the log of the normal density's constant.
#[derive(Debug, Clone)]
pub struct Kernel {
    l: ndarray::Array2<f64>,
    log_norm: f64,
}

impl Kernel {
    /// The kernel of `n` points of `d` columns with data covariance `cov` (ddof = 1).
    pub fn new(mut cov: ndarray::Array2<f64>, n: usize, bandwidth: Option<f64>) -> Result<Kernel> {
        let d = cov.nrows();
        if n < 2 {
            return Err(Error::Data("a density needs at least 2 rows".into()));
        }
        let factor = bandwidth.unwrap_or_else(|| (n as f64).powf(-1.0 / (d as f64 + 4.0)));
        cov.mapv_inplace(|c| c * factor * factor);
        let l = linalg::cholesky(&cov).ok_or_else(|| {
            Error::Data("the chosen columns are constant or perfectly correlated, so a density over them is undefined; leave one out".into())
        })?;
        let log_norm = 0.5 * d as f64 * (2.0 * std::f64::consts::PI).ln() + (0..d).map(|i| l[[i, i]].ln()).sum::<f64>();
        Ok(Kernel { l, log_norm })
    }

    /// A point whitened: y = L⁻¹ x, so (x-xi)ᵀ Σ⁻¹ (x-xi) = |y - yi|².
    pub fn whiten(&self, row: &[f64]) -> Vec<f64> {
        let mut out = row.to_vec();
        linalg::forward_substitute(&self.l, &mut out);
        out
    }

    /// The density at whitened point `yi` from the `refs` whitened reference points
    /// (row-major, in order): the mean of the kernel over them.
    pub fn value(&self, yi: &[f64], refs: &[f64]) -> f64 {
        let d = yi.len().max(1);
        let m = (refs.len() / d) as f64;
        let scale = (-self.log_norm).exp() / m;
        let s: f64 = refs
            .chunks_exact(d)
            .map(|yj| {
                let q: f64 = yi.iter().zip(yj).map(|(a, b)| (a - b) * (a - b)).sum();
                (-0.5 * q).exp()
            })
            .sum();
        s * scale
    }
}

/// [`density`], with the kernel sum taken over a seeded subsample of `limit` reference
/// points when n > `limit`. Each value is then a mean of `limit` independent draws of a
/// kernel bounded by K = 1 / sqrt(det(2π Σ)), so by Hoeffding's inequality it lies within
/// K·sqrt(ln(2/δ) / (2·limit)) of the exact value with probability 1 - δ
/// (for limit = 4000 and δ = 0.01: 0.0180·K). The bandwidth is still set from all n points.
pub fn density_estimate(x: ArrayView2<f64>, bandwidth: Option<f64>, limit: usize, seed: u64) -> Result<Vec<f64>> {
    let (n, d) = x.dim();
    if n < 2 {
        return Err(Error::Data("a density needs at least 2 rows".into()));
    }
    let kernel = Kernel::new(linalg::covariance(x, 1), n, bandwidth)?;
    let mut y = Vec::with_capacity(n * d);
    for row in x.rows() {
        y.extend(kernel.whiten(&row.to_vec()));
    }
    let mut refs = Vec::new();
    for j in reference_points(n, limit, seed) {
        refs.extend_from_slice(&y[j * d..(j + 1) * d]);
    }
    Ok((0..n).map(|i| kernel.value(&y[i * d..(i + 1) * d], &refs)).collect())
}

/// Exact eccentricity (Singh, Mémoli, Carlsson 2007, §4.2): for p = 1, 2 the p-mean of
/// the Euclidean distances from a point to all n points (itself included), for p = ∞ the
/// largest such distance.
pub fn eccentricity(x: ArrayView2<f64>, norm: Spread) -> Result<Vec<f64>> {
    eccentricity_estimate(x, norm, usize::MAX, 0)
}

/// A point's squared length, as the root-mean-square eccentricity sums it.
pub fn norm_sq(row: &[f64]) -> f64 {
    let r = ndarray::ArrayView1::from(row);
    r.dot(&r)
}

/// Root-mean-square eccentricity of one point from the points' means `mu` and the mean
/// of their squared lengths ([`norm_sq`]).
pub fn rms_eccentricity(row: &[f64], mu: &[f64], mean_sq: f64) -> f64 {
    let r = ndarray::ArrayView1::from(row);
    let v = r.dot(&r) - 2.0 * r.dot(&ndarray::ArrayView1::from(mu)) + mean_sq;
    v.max(0.0).sqrt()
}

/// The mean (`Spread::Mean`) or largest (otherwise) distance from `xi` to the reference
/// points `refs` (row-major, in order).
pub fn spread_to(xi: &[f64], refs: &[f64], norm: Spread) -> f64 {
    let d = xi.len().max(1);
    let dists = refs.chunks_exact(d).map(|xj| xi.iter().zip(xj).map(|(a, b)| (a - b) * (a - b)).sum::<f64>().sqrt());
    match norm {
        Spread::Mean => dists.sum::<f64>() / (refs.len() / d) as f64,
        _ => dists.fold(0.0, f64::max),
    }
}

/// [`eccentricity`], exact for [`Spread::Rms`] at any size (Σ|x-y|² = n|x|² - 2x·Σy + Σ|y|²,
/// O(n d)). For `Mean` and `Max` above `limit` points the distances are taken to a seeded
/// subsample of `limit` points: the mean is then within D·sqrt(ln(2/δ) / (2·limit)) of
/// exact with probability 1 - δ (Hoeffding, D the data's diameter), and the max is a lower
/// bound short by at most the subsample's covering radius.
pub fn eccentricity_estimate(x: ArrayView2<f64>, norm: Spread, limit: usize, seed: u64) -> Result<Vec<f64>> {
    let (n, d) = x.dim();
    if n == 0 {
        return Err(Error::Data("no rows".into()));
    }
    let flat = x.as_standard_layout();
    let flat = flat.as_slice().expect("standard layout");
    if norm == Spread::Rms {
        let mu = linalg::column_means(x).to_vec();
        let mean_sq: f64 = flat.chunks_exact(d.max(1)).map(norm_sq).sum::<f64>() / n as f64;
        return Ok(flat.chunks_exact(d.max(1)).map(|r| rms_eccentricity(r, &mu, mean_sq)).collect());
    }
    let mut refs = Vec::new();
    for j in reference_points(n, limit, seed) {
        refs.extend_from_slice(&flat[j * d..(j + 1) * d]);
    }
    Ok((0..n).map(|i| spread_to(&flat[i * d..(i + 1) * d], &refs, norm)).collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::Array2;

    fn cloud(n: usize, d: usize, seed: u64) -> Array2<f64> {
        let mut r = SplitMix64::new(seed);
        Array2::from_shape_fn((n, d), |(_, j)| r.normal() * (1.0 + j as f64))
    }

    #[test]
    fn principal_scores_have_largest_variance_first() {
        let x = cloud(500, 3, 4);
        let var = |v: &[f64]| {
            let m = v.iter().sum::<f64>() / v.len() as f64;
            v.iter().map(|a| (a - m).powi(2)).sum::<f64>()
        };
        let s1 = principal_scores(x.view(), 1).unwrap();
        let s2 = principal_scores(x.view(), 2).unwrap();
        let s3 = principal_scores(x.view(), 3).unwrap();
        assert!(var(&s1) > var(&s2) && var(&s2) > var(&s3));
        assert!(principal_scores(x.view(), 4).unwrap_err().to_string().contains("lens.component"));
    }

    #[test]
    fn rms_eccentricity_shortcut_equals_pairwise_sum() {
        let x = cloud(200, 4, 9);
        let fast = eccentricity(x.view(), Spread::Rms).unwrap();
        for i in [0, 17, 199] {
            let s: f64 = (0..200).map(|j| (&x.row(i) - &x.row(j)).mapv(|v| v * v).sum()).sum::<f64>() / 200.0;
            assert!((fast[i] - s.sqrt()).abs() < 1e-9);
        }
    }

    #[test]
    fn density_subsample_stays_within_its_stated_bound() {
        // The Hoeffding bound of the doc comment, with δ = 1e-6 so the test cannot flake.
        let x = cloud(1500, 2, 11);
        let exact = density(x.view(), None).unwrap();
        let est = density_estimate(x.view(), None, 300, 5).unwrap();
        let factor = (1500f64).powf(-1.0 / 6.0);
        let mut cov = linalg::covariance(x.view(), 1);
        cov.mapv_inplace(|c| c * factor * factor);
        let det = cov[[0, 0]] * cov[[1, 1]] - cov[[0, 1]] * cov[[1, 0]];
        let k = 1.0 / ((2.0 * std::f64::consts::PI).powi(2) * det).sqrt();
        let bound = k * ((2.0f64 / 1e-6).ln() / (2.0 * 300.0)).sqrt();
        let worst = exact.iter().zip(&est).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
        assert!(worst < bound, "worst {worst} bound {bound}");
        assert!(worst > 0.0);
    }

    #[test]
    fn mean_eccentricity_subsample_within_bound() {
        let x = cloud(1200, 3, 2);
        let exact = eccentricity(x.view(), Spread::Mean).unwrap();
        let est = eccentricity_estimate(x.view(), Spread::Mean, 300, 3).unwrap();
        let max_e = eccentricity(x.view(), Spread::Max).unwrap();
        let diameter = max_e.iter().cloned().fold(0.0, f64::max);
        let bound = diameter * ((2.0f64 / 1e-6).ln() / 600.0).sqrt();
        assert!(exact.iter().zip(&est).all(|(a, b)| (a - b).abs() < bound));
        let est_max = eccentricity_estimate(x.view(), Spread::Max, 300, 3).unwrap();
        assert!(max_e.iter().zip(&est_max).all(|(a, b)| b <= a));
    }

    #[test]
    fn density_refuses_degenerate_columns() {
        let x = Array2::from_shape_fn((50, 2), |(i, j)| if j == 0 { i as f64 } else { 2.0 * i as f64 });
        assert!(density(x.view(), None).unwrap_err().to_string().contains("correlated"));
    }
}
