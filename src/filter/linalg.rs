//! The small dense linear algebra the filters need (d × d with d the number of chosen
//! columns, so tens at most): column means, covariance, a symmetric eigensolver and a
//! Cholesky factor. Not for large matrices.

use ndarray::{Array1, Array2, ArrayView2};

/// Column means of an n × d matrix: sums over the rows in order ([`crate::points::ColumnSums`],
/// the order a run in parts repeats), divided by n; zeros for no row.
pub fn column_means(x: ArrayView2<f64>) -> Array1<f64> {
    let (n, d) = x.dim();
    if n == 0 {
        return Array1::zeros(d);
    }
    let mut sums = crate::points::ColumnSums::new(d);
    for row in x.rows() {
        sums.add_rows(&row.to_vec());
    }
    Array1::from(sums.means())
}

/// Covariance with divisor n - ddof (NumPy's `np.cov` uses ddof = 1).
pub fn covariance(x: ArrayView2<f64>, ddof: usize) -> Array2<f64> {
    let mu = column_means(x);
    let mut c = CrossSums::new(mu.to_vec());
    for row in x.rows() {
        c.add_rows(&row.to_vec());
    }
    c.finish(ddof)
}

/// Running sums of the products of centred columns over rows added in table order (the
/// second pass of a covariance, the first being the means): the engine adds all rows at
/// once, a run in parts ([`crate::parts`]) part after part, with the same bits.
#[derive(Debug, Clone, PartialEq)]
pub struct CrossSums {
    pub mu: Vec<f64>,
    /// d × d, row-major; only the upper triangle (j >= i) is summed.
    pub c: Vec<f64>,
    pub count: usize,
}

impl CrossSums {
    pub fn new(mu: Vec<f64>) -> Self {
        let d = mu.len();
        CrossSums { mu, c: vec![0.0; d * d], count: 0 }
    }

    /// Adds rows given row-major, d values each, in order.
    pub fn add_rows(&mut self, rows: &[f64]) {
        let d = self.mu.len();
        if d == 0 {
            return;
        }
        for row in rows.chunks_exact(d) {
            for i in 0..d {
                let a = row[i] - self.mu[i];
                for j in i..d {
                    self.c[i * d + j] += a * (row[j] - self.mu[j]);
                }
            }
            self.count += 1;
        }
    }

    /// The covariance matrix, divisor n - ddof (at least 1).
    pub fn finish(&self, ddof: usize) -> Array2<f64> {
        let d = self.mu.len();
        let div = (self.count.saturating_sub(ddof)).max(1) as f64;
        let mut c = Array2::<f64>::zeros((d, d));
        for i in 0..d {
            for j in i..d {
                c[[i, j]] = self.c[i * d + j] / div;
                c[[j, i]] = c[[i, j]];
            }
        }
        c
    }
}

/// Eigenvalues (descending) and unit eigenvectors (as columns, same order) of a symmetric
/// matrix, by cyclic Jacobi rotations (Golub & Van Loan, "Matrix Computations", §8.5).
/// Each eigenvector's sign is fixed so that its largest-magnitude entry is positive, so
/// results do not depend on rounding paths.
pub fn symmetric_eigen(a: &Array2<f64>) -> (Vec<f64>, Array2<f64>) {
    let d = a.nrows();
    let mut m = a.clone();
    let mut v = Array2::<f64>::eye(d);
    for _sweep in 0..100 {
        let off: f64 = (0..d).flat_map(|i| (0..d).filter(move |&j| j != i).map(move |j| (i, j))).map(|(i, j)| m[[i, j]].powi(2)).sum();
        let scale: f64 = m.iter().map(|x| x * x).sum::<f64>().max(f64::MIN_POSITIVE);
        if off <= 1e-30 * scale {
            break;
        }
        for p in 0..d {
            for q in (p + 1)..d {
                let apq = m[[p, q]];
                if apq.abs() < 1e-300 {
                    continue;
                }
                let theta = (m[[q, q]] - m[[p, p]]) / (2.0 * apq);
                let t = theta.signum() / (theta.abs() + (theta * theta + 1.0).sqrt());
                let t = if theta == 0.0 { 1.0 } else { t };
                let c = 1.0 / (t * t + 1.0).sqrt();
                let s = t * c;
                for k in 0..d {
                    let mkp = m[[k, p]];
                    let mkq = m[[k, q]];
                    m[[k, p]] = c * mkp - s * mkq;
                    m[[k, q]] = s * mkp + c * mkq;
                }
                for k in 0..d {
                    let mpk = m[[p, k]];
                    let mqk = m[[q, k]];
                    m[[p, k]] = c * mpk - s * mqk;
                    m[[q, k]] = s * mpk + c * mqk;
                }
                for k in 0..d {
                    let vkp = v[[k, p]];
                    let vkq = v[[k, q]];
                    v[[k, p]] = c * vkp - s * vkq;
                    v[[k, q]] = s * vkp + c * vkq;
                }
            }
        }
    }
    let mut order: Vec<usize> = (0..d).collect();
    order.sort_by(|&i, &j| m[[j, j]].partial_cmp(&m[[i, i]]).unwrap_or(std::cmp::Ordering::Equal));
    let values = order.iter().map(|&i| m[[i, i]]).collect();
    let mut vectors = Array2::<f64>::zeros((d, d));
    for (col, &i) in order.iter().enumerate() {
        let big = (0..d).max_by(|&a, &b| v[[a, i]].abs().partial_cmp(&v[[b, i]].abs()).unwrap()).unwrap_or(0);
        let sign = if v[[big, i]] < 0.0 { -1.0 } else { 1.0 };
        for k in 0..d {
            vectors[[k, col]] = sign * v[[k, i]];
        }
    }
    (values, vectors)
}

/// Lower-triangular L with L Lᵀ = a, or `None` when a is not positive definite.
pub fn cholesky(a: &Array2<f64>) -> Option<Array2<f64>> {
    let d = a.nrows();
    let mut l = Array2::<f64>::zeros((d, d));
    for i in 0..d {
        for j in 0..=i {
            let s: f64 = (0..j).map(|k| l[[i, k]] * l[[j, k]]).sum();
            if i == j {
                let v = a[[i, i]] - s;
                if !(v > 1e-12 * a[[i, i]].abs().max(f64::MIN_POSITIVE)) {
                    return None;
                }
                l[[i, j]] = v.sqrt();
            } else {
                l[[i, j]] = (a[[i, j]] - s) / l[[j, j]];
            }
        }
    }
    Some(l)
}

/// Solves L y = b in place for lower-triangular L.
pub fn forward_substitute(l: &Array2<f64>, b: &mut [f64]) {
    let d = l.nrows();
    for i in 0..d {
        let s: f64 = (0..i).map(|k| l[[i, k]] * b[k]).sum();
        b[i] = (b[i] - s) / l[[i, i]];
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn eigen_of_known_matrix() {
        // [[2,1],[1,2]] has eigenvalues 3 and 1 with vectors (1,1)/√2 and (1,-1)/√2 (by hand).
        let (vals, vecs) = symmetric_eigen(&array![[2.0, 1.0], [1.0, 2.0]]);
        assert!((vals[0] - 3.0).abs() < 1e-12 && (vals[1] - 1.0).abs() < 1e-12);
        let r = 1.0 / 2f64.sqrt();
        assert!((vecs[[0, 0]] - r).abs() < 1e-12 && (vecs[[1, 0]] - r).abs() < 1e-12);
        assert!((vecs[[0, 1]].abs() - r).abs() < 1e-12);
    }

    #[test]
    fn eigen_reconstructs_matrix() {
        let a = array![[4.0, 1.0, 0.5], [1.0, 3.0, 0.2], [0.5, 0.2, 1.0]];
        let (vals, v) = symmetric_eigen(&a);
        for i in 0..3 {
            for j in 0..3 {
                let r: f64 = (0..3).map(|k| v[[i, k]] * vals[k] * v[[j, k]]).sum();
                assert!((r - a[[i, j]]).abs() < 1e-10);
            }
        }
    }

    #[test]
    fn cholesky_factors_and_refuses_singular() {
        let a = array![[4.0, 2.0], [2.0, 3.0]];
        let l = cholesky(&a).unwrap();
        let back = l.dot(&l.t());
        assert!((&back - &a).iter().all(|x| x.abs() < 1e-12));
        assert!(cholesky(&array![[1.0, 1.0], [1.0, 1.0]]).is_none());
    }
}
