//! The numerical core of least squares: Householder QR on a weighted, column-scaled
//! design, one step of iterative refinement, and `(XᵀWX)⁻¹` from the triangular factor.
//! Kept apart from `lsq.rs`, which checks the inputs, centres the design and turns the
//! centred solution back into coefficients and their covariance.

use super::FitError;

/// Euclidean norm with scaling, so that values near 1e200 do not overflow.
fn norm2<'a>(values: impl Iterator<Item = &'a f64> + Clone) -> f64 {
    let scale = values.clone().fold(0.0_f64, |m, v| m.max(v.abs()));
    if scale == 0.0 || !scale.is_finite() {
        return scale;
    }
    let sum: f64 = values.map(|v| (v / scale) * (v / scale)).sum();
    scale * sum.sqrt()
}

/// Apply the Householder reflection `I − 2vvᵀ/(vᵀv)` to `col` in place.
fn reflect(v: &[f64], vtv: f64, col: &mut [f64]) {
    let dot: f64 = v.iter().zip(col.iter()).map(|(a, b)| a * b).sum();
    let f = 2.0 * dot / vtv;
    col.iter_mut().zip(v).for_each(|(c, vi)| *c -= f * vi);
}

/// Householder QR least squares on a column-major design `cols` (m × p,
/// m > p), weights `w`. Returns the coefficients and `(XᵀWX)⁻¹`.
// Triangular solves and products read best with explicit indices.
#[allow(clippy::needless_range_loop)]
pub(super) fn qr_solve(
    cols: &[Vec<f64>],
    y: &[f64],
    w: &[f64],
) -> Result<(Vec<f64>, Vec<Vec<f64>>), FitError> {
    let p = cols.len();
    let m = y.len();
    let sqrt_w: Vec<f64> = w.iter().map(|v| v.sqrt()).collect();

    // √W·X, each column scaled to unit length (scale kept for undoing).
    let mut a: Vec<Vec<f64>> = cols
        .iter()
        .map(|c| c.iter().zip(&sqrt_w).map(|(x, s)| x * s).collect())
        .collect();
    let mut scale = vec![0.0; p];
    for (j, col) in a.iter_mut().enumerate() {
        let s = norm2(col.iter());
        if s == 0.0 {
            return Err(FitError::RankDeficient { column: j });
        }
        if !s.is_finite() {
            return Err(FitError::Numerical {
                detail: format!("column {j} overflows"),
            });
        }
        col.iter_mut().for_each(|v| *v /= s);
        scale[j] = s;
    }
    let mut b: Vec<f64> = (0..m).map(|i| sqrt_w[i] * y[i]).collect();

    // Householder QR, applying each reflection to the remaining columns and
    // to b. After step k, a[k][k] holds R_kk and a[j][k] (j > k) holds R_kj.
    // With unit columns, |R_kk| is the sine of the angle between column k and
    // the span of the earlier ones: below `tol` the design is singular.
    let tol = 10.0 * m.max(p) as f64 * f64::EPSILON;
    let mut reflectors: Vec<(Vec<f64>, f64)> = Vec::with_capacity(p);
    for k in 0..p {
        let norm = norm2(a[k][k..].iter());
        if norm <= tol {
            return Err(FitError::RankDeficient { column: k });
        }
        let alpha = if a[k][k] > 0.0 { -norm } else { norm };
        let mut v: Vec<f64> = a[k][k..].to_vec();
        v[0] -= alpha;
        // vtv > 0 because |v[0]| = |x0 − alpha| ≥ norm > 0.
        let vtv: f64 = v.iter().map(|x| x * x).sum();
        for col in a.iter_mut().skip(k + 1) {
            reflect(&v, vtv, &mut col[k..]);
        }
        reflect(&v, vtv, &mut b[k..]);
        a[k][k] = alpha;
        a[k][k + 1..].iter_mut().for_each(|x| *x = 0.0);
        reflectors.push((v, vtv));
    }
    let r = |i: usize, j: usize| a[j][i]; // R_ij, upper triangular (i ≤ j)
    let back_substitute = |rhs: &[f64]| -> Vec<f64> {
        let mut z = vec![0.0; p];
        for i in (0..p).rev() {
            let mut s = rhs[i];
            for j in i + 1..p {
                s -= r(i, j) * z[j];
            }
            z[i] = s / r(i, i);
        }
        z
    };

    // Solve R z = (Qᵀb)[..p] for the scaled coefficients z = scale·β, then
    // one step of iterative refinement: the residual is projected again and
    // the correction added (recovers digits lost to rounding).
    let mut z = back_substitute(&b);
    let mut resid: Vec<f64> = (0..m)
        .map(|i| {
            let fitted: f64 = (0..p).map(|j| cols[j][i] / scale[j] * z[j]).sum();
            sqrt_w[i] * (y[i] - fitted)
        })
        .collect();
    for (k, (v, vtv)) in reflectors.iter().enumerate() {
        reflect(v, *vtv, &mut resid[k..]);
    }
    let dz = back_substitute(&resid);
    z.iter_mut().zip(&dz).for_each(|(zi, d)| *zi += d);
    let coef: Vec<f64> = z.iter().zip(&scale).map(|(zi, si)| zi / si).collect();

    let cov = unscaled_covariance(&r, &scale);
    Ok((coef, cov))
}

/// `(XᵀWX)⁻¹ = D⁻¹ R⁻¹ R⁻ᵀ D⁻¹` from the triangular factor `r(i, j)` (i ≤ j) of the
/// column-scaled design and the column scales `D = diag(scale)`.
#[allow(clippy::needless_range_loop)]
fn unscaled_covariance(r: &impl Fn(usize, usize) -> f64, scale: &[f64]) -> Vec<Vec<f64>> {
    let p = scale.len();
    // R⁻¹ (upper triangular), then (XᵀWX)⁻¹ = D⁻¹ R⁻¹ R⁻ᵀ D⁻¹, D = diag(scale).
    let mut rinv = vec![vec![0.0; p]; p];
    for j in 0..p {
        rinv[j][j] = 1.0 / r(j, j);
        for i in (0..j).rev() {
            let mut s = 0.0;
            for k in i + 1..=j {
                s += r(i, k) * rinv[k][j];
            }
            rinv[i][j] = -s / r(i, i);
        }
    }
    let mut cov = vec![vec![0.0; p]; p];
    for i in 0..p {
        for j in 0..p {
            let s: f64 = (i.max(j)..p).map(|k| rinv[i][k] * rinv[j][k]).sum();
            cov[i][j] = s / (scale[i] * scale[j]);
        }
    }
    cov
}
