//! How much of each source cylinder: a non-negative least-squares solve over the
//! component amounts (Lawson & Hanson, *Solving Least Squares Problems*, 1974, ch. 23).

use nalgebra::{DMatrix, DVector};

/// Solve min ‖A s − b‖ subject to s ≥ 0. `a` is components × sources.
pub fn nnls(a: &DMatrix<f64>, b: &DVector<f64>) -> DVector<f64> {
    separate(a, b).unwrap_or_else(|| active_set(a, b))
}

/// Lawson and Hanson's active-set method.
fn active_set(a: &DMatrix<f64>, b: &DVector<f64>) -> DVector<f64> {
    let n = a.ncols();
    let mut s = DVector::zeros(n);
    let mut passive = vec![false; n];
    let scale = (a.transpose() * b).amax().max(f64::MIN_POSITIVE);
    let tol = 1e-12 * scale;
    for _ in 0..(3 * n + 10) {
        let w = a.transpose() * (b - a * &s);
        let pick = (0..n).filter(|&j| !passive[j]).max_by(|&i, &j| w[i].total_cmp(&w[j]));
        let Some(j) = pick else { break };
        if w[j] <= tol {
            break;
        }
        passive[j] = true;
        for _ in 0..(3 * n + 10) {
            let idx: Vec<usize> = (0..n).filter(|&k| passive[k]).collect();
            let z_p = least_squares(&a.select_columns(&idx), b);
            if z_p.iter().all(|&z| z > 0.0) {
                s.fill(0.0);
                for (k, &col) in idx.iter().enumerate() {
                    s[col] = z_p[k];
                }
                break;
            }
            // Step back towards the feasible region until one passive value reaches zero.
            let mut alpha = f64::INFINITY;
            for (k, &col) in idx.iter().enumerate() {
                if z_p[k] <= 0.0 {
                    let denom = s[col] - z_p[k];
                    if denom > 0.0 {
                        alpha = alpha.min(s[col] / denom);
                    }
                }
            }
            if !alpha.is_finite() {
                alpha = 0.0;
            }
            for (k, &col) in idx.iter().enumerate() {
                s[col] += alpha * (z_p[k] - s[col]);
                if s[col] <= tol.min(1e-300) || (z_p[k] <= 0.0 && s[col] <= 1e-15 * scale) {
                    s[col] = 0.0;
                    passive[col] = false;
                }
            }
            if !passive.iter().any(|&p| p) {
                break;
            }
        }
    }
    s
}

/// The solution where no two sources share a component (pure gases, or premixes of
/// gases no other source brings): the problem then splits into one per source,
/// min ‖a_k s_k − b‖ over s_k ≥ 0, whose solution is max(a_k·b / a_k·a_k, 0). None where
/// two sources overlap.
fn separate(a: &DMatrix<f64>, b: &DVector<f64>) -> Option<DVector<f64>> {
    let mut owner: Vec<Option<usize>> = vec![None; a.nrows()];
    for k in 0..a.ncols() {
        for i in 0..a.nrows() {
            if a[(i, k)] != 0.0 {
                if owner[i].is_some() {
                    return None;
                }
                owner[i] = Some(k);
            }
        }
    }
    Some(DVector::from_iterator(
        a.ncols(),
        a.column_iter().map(|col| {
            let norm = col.dot(&col);
            if norm > 0.0 {
                (col.dot(b) / norm).max(0.0)
            } else {
                0.0
            }
        }),
    ))
}

/// Least-squares solution of A z = b through the SVD (which copes with sources of equal
/// composition), with two rounds of iterative refinement: the SVD alone leaves errors of
/// 1e-10 relative on premix-and-diluent systems, more than a plan may carry.
fn least_squares(a: &DMatrix<f64>, b: &DVector<f64>) -> DVector<f64> {
    let svd = a.clone().svd(true, true);
    let solve = |rhs: &DVector<f64>| svd.solve(rhs, 1e-14).unwrap_or_else(|_| DVector::zeros(a.ncols()));
    let mut z = solve(b);
    for _ in 0..2 {
        let r = b - a * &z;
        z += solve(&r);
    }
    z
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_on_a_constructed_premix_case() {
        // Components CO, CO2, N2; sources: CO 2 % in N2, pure CO2, pure N2.
        // Target 10 mol of CO 500 ppm, CO2 15 %, N2 balance: 0.25 mol premix, 1.5 mol CO2,
        // and N2 = 10 - 0.25 - 1.5 = 8.25 mol.
        let a = DMatrix::from_row_slice(3, 3, &[0.02, 0.0, 0.0, 0.0, 1.0, 0.0, 0.98, 0.0, 1.0]);
        let b = DVector::from_vec(vec![0.005, 1.5, 10.0 - 0.005 - 1.5]);
        let s = nnls(&a, &b);
        for (got, want) in s.iter().zip([0.25, 1.5, 8.25]) {
            assert!((got - want).abs() < 1e-12, "{s}");
        }
    }

    #[test]
    fn infeasible_targets_leave_a_residual_and_no_negative_amount() {
        // Only a 2 % CO premix and pure CO2 are at hand, but the target has less N2 than
        // the premix brings along: N2 cannot be taken out again.
        let a = DMatrix::from_row_slice(3, 2, &[0.02, 0.0, 0.0, 1.0, 0.98, 0.0]);
        let b = DVector::from_vec(vec![1.0, 1.0, 1.0]);
        let s = nnls(&a, &b);
        assert!(s.iter().all(|&v| v >= 0.0));
        let r = &a * &s - &b;
        assert!(r.norm() > 0.1);
    }

    #[test]
    fn sources_that_share_no_component_are_solved_one_by_one_as_the_active_set_solves_them() {
        // Components CO, NO, N2, CO2, O2; sources: 1 % CO in N2, pure NO, pure CO2, an O2
        // premix that nothing else brings (its own row) and a source of nothing wanted.
        let a = DMatrix::from_row_slice(
            5,
            4,
            &[0.01, 0.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.99, 0.0, 0.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, 0.0, 1.0],
        );
        for b in [
            vec![0.002, 0.0005, 0.198, 0.3, 0.5],
            // More CO than the premix's N2 allows, and no NO wanted: a residual.
            vec![0.5, 0.0, 0.1, 0.0, 0.0],
            vec![0.0, 0.0, 0.0, 0.0, 0.0],
        ] {
            let b = DVector::from_vec(b);
            let (fast, general) = (separate(&a, &b).expect("separable"), active_set(&a, &b));
            for (f, g) in fast.iter().zip(&general) {
                assert!((f - g).abs() <= 1e-12 * b.amax().max(1e-300), "{fast} vs {general}");
            }
        }
        // Two sources bringing N2: not separable.
        let shared = DMatrix::from_row_slice(2, 2, &[0.02, 0.0, 0.98, 1.0]);
        assert!(separate(&shared, &DVector::from_vec(vec![0.01, 0.99])).is_none());
    }

    #[test]
    fn unused_sources_get_zero() {
        // Pure N2 and pure Ar for a pure N2 target.
        let a = DMatrix::from_row_slice(2, 2, &[1.0, 0.0, 0.0, 1.0]);
        let b = DVector::from_vec(vec![5.0, 0.0]);
        let s = nnls(&a, &b);
        assert!((s[0] - 5.0).abs() < 1e-12 && s[1] == 0.0);
    }
}
