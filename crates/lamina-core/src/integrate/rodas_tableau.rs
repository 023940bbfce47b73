//! Coefficients of Rodas4 in the transformed form that needs no matrix-vector products:
//! E. Hairer & G. Wanner, Solving Ordinary Differential Equations II (2nd ed., 1996),
//! sec. IV.7 (the form in the transformed stage variables) and sec. VI.4 (the method RODAS), as in the authors'
//! published code RODAS (coefficient set 1). `A` gives the stage arguments, `C` the coupling
//! of earlier stage solutions, `C2..C4` the stage times, `D1..D4` the time-derivative weights
//! (the row sums of the method's gamma matrix), `D2j` and `D3j` the dense output.

#![allow(clippy::excessive_precision)]

/// The diagonal entry of the method's gamma matrix.
pub(super) const GAMMA: f64 = 0.25;

pub(super) const C2: f64 = 0.386;
pub(super) const C3: f64 = 0.21;
pub(super) const C4: f64 = 0.63;

pub(super) const D1: f64 = 0.25;
pub(super) const D2: f64 = -0.1043;
pub(super) const D3: f64 = 0.1035;
pub(super) const D4: f64 = -0.3620000000000023e-01;

pub(super) const A21: f64 = 0.1544e+01;
pub(super) const A31: f64 = 0.9466785280815826;
pub(super) const A32: f64 = 0.2557011698983284;
pub(super) const A41: f64 = 0.3314825187068521e+01;
pub(super) const A42: f64 = 0.2896124015972201e+01;
pub(super) const A43: f64 = 0.9986419139977817;
pub(super) const A51: f64 = 0.1221224509226641e+01;
pub(super) const A52: f64 = 0.6019134481288629e+01;
pub(super) const A53: f64 = 0.1253708332932087e+02;
pub(super) const A54: f64 = -0.6878860361058950;

pub(super) const C21: f64 = -0.56688e+01;
pub(super) const C31: f64 = -0.2430093356833875e+01;
pub(super) const C32: f64 = -0.2063599157091915;
pub(super) const C41: f64 = -0.1073529058151375;
pub(super) const C42: f64 = -0.9594562251023355e+01;
pub(super) const C43: f64 = -0.2047028614809616e+02;
pub(super) const C51: f64 = 0.7496443313967647e+01;
pub(super) const C52: f64 = -0.1024680431464352e+02;
pub(super) const C53: f64 = -0.3399990352819905e+02;
pub(super) const C54: f64 = 0.1170890893206160e+02;
pub(super) const C61: f64 = 0.8083246795921522e+01;
pub(super) const C62: f64 = -0.7981132988064893e+01;
pub(super) const C63: f64 = -0.3152159432874371e+02;
pub(super) const C64: f64 = 0.1631930543123136e+02;
pub(super) const C65: f64 = -0.6058818238834054e+01;

pub(super) const D21: f64 = 0.1012623508344586e+02;
pub(super) const D22: f64 = -0.7487995877610167e+01;
pub(super) const D23: f64 = -0.3480091861555747e+02;
pub(super) const D24: f64 = -0.7992771707568823e+01;
pub(super) const D25: f64 = 0.1025137723295662e+01;
pub(super) const D31: f64 = -0.6762803392801253;
pub(super) const D32: f64 = 0.6087714651680015e+01;
pub(super) const D33: f64 = 0.1643084320892478e+02;
pub(super) const D34: f64 = 0.2476722511418386e+02;
pub(super) const D35: f64 = -0.6594389125716872e+01;

#[cfg(test)]
#[allow(clippy::needless_range_loop)] // matrix algebra reads best with indices
mod tests {
    use super::*;

    const S: usize = 6;

    /// Stage-argument weights `a_ij` (rows 5 and 6: the method is stiffly accurate, so stage
    /// 6 starts from the embedded solution, stage 5's argument plus its solution).
    fn a() -> [[f64; S]; S] {
        let mut a = [[0.0; S]; S];
        a[1][0] = A21;
        a[2][..2].copy_from_slice(&[A31, A32]);
        a[3][..3].copy_from_slice(&[A41, A42, A43]);
        a[4][..4].copy_from_slice(&[A51, A52, A53, A54]);
        a[5][..5].copy_from_slice(&[A51, A52, A53, A54, 1.0]);
        a
    }

    /// The inverse of the gamma matrix: `1 / gamma` on the diagonal, `-c_ij` below it.
    fn gamma_inverse() -> [[f64; S]; S] {
        let rows: [&[f64]; S] = [
            &[],
            &[C21],
            &[C31, C32],
            &[C41, C42, C43],
            &[C51, C52, C53, C54],
            &[C61, C62, C63, C64, C65],
        ];
        let mut g = [[0.0; S]; S];
        for (i, row) in rows.iter().enumerate() {
            for (j, c) in row.iter().enumerate() {
                g[i][j] = -c;
            }
            g[i][i] = 1.0 / GAMMA;
        }
        g
    }

    /// Inverse of a lower triangular matrix by forward substitution.
    fn invert_lower(m: &[[f64; S]; S]) -> [[f64; S]; S] {
        let mut inv = [[0.0; S]; S];
        for col in 0..S {
            for i in col..S {
                let rhs = if i == col { 1.0 } else { 0.0 };
                let sum: f64 = (col..i).map(|k| m[i][k] * inv[k][col]).sum();
                inv[i][col] = (rhs - sum) / m[i][i];
            }
        }
        inv
    }

    fn mul(x: &[[f64; S]; S], y: &[[f64; S]; S]) -> [[f64; S]; S] {
        let mut z = [[0.0; S]; S];
        for i in 0..S {
            for j in 0..S {
                z[i][j] = (0..S).map(|k| x[i][k] * y[k][j]).sum();
            }
        }
        z
    }

    /// The method in its original form: `alpha`, `gamma` and the weights `b` of the solution
    /// whose transformed weights are `m`.
    fn original_form(m: [f64; S]) -> ([[f64; S]; S], [[f64; S]; S], [f64; S]) {
        let gamma = invert_lower(&gamma_inverse());
        let alpha = mul(&a(), &gamma);
        let b: [f64; S] = std::array::from_fn(|j| (0..S).map(|i| m[i] * gamma[i][j]).sum());
        (alpha, gamma, b)
    }

    /// Residuals of the order conditions up to order 4 of a Rosenbrock method, Hairer &
    /// Wanner, Solving ODEs II, sec. IV.7, Table 7.1 (`beta = alpha + gamma` below the
    /// diagonal, `beta'_i` its row sums, `alpha_i` the row sums of alpha).
    fn order_residuals(m: [f64; S]) -> [f64; 8] {
        let (alpha, gamma, b) = original_form(m);
        let g = GAMMA;
        let mut beta = [[0.0; S]; S];
        for i in 0..S {
            for j in 0..i {
                beta[i][j] = alpha[i][j] + gamma[i][j];
            }
        }
        let beta_sum: [f64; S] = std::array::from_fn(|i| beta[i].iter().sum());
        let alpha_sum: [f64; S] = std::array::from_fn(|i| alpha[i].iter().sum());
        let dot = |v: [f64; S]| -> f64 { (0..S).map(|i| b[i] * v[i]).sum() };
        let times = |mat: &[[f64; S]; S], v: [f64; S]| -> [f64; S] {
            std::array::from_fn(|i| (0..S).map(|j| mat[i][j] * v[j]).sum())
        };
        let alpha_sq: [f64; S] = std::array::from_fn(|i| alpha_sum[i].powi(2));
        let alpha_cube: [f64; S] = std::array::from_fn(|i| alpha_sum[i].powi(3));
        let alpha_beta = times(&alpha, beta_sum);
        let alpha_alpha_beta: [f64; S] = std::array::from_fn(|i| alpha_sum[i] * alpha_beta[i]);
        [
            dot([1.0; S]) - 1.0,
            dot(beta_sum) - (0.5 - g),
            dot(alpha_sq) - 1.0 / 3.0,
            dot(times(&beta, beta_sum)) - (1.0 / 6.0 - g + g * g),
            dot(alpha_cube) - 0.25,
            dot(alpha_alpha_beta) - (1.0 / 8.0 - g / 3.0),
            dot(times(&beta, alpha_sq)) - (1.0 / 12.0 - g / 3.0),
            dot(times(&beta, times(&beta, beta_sum)))
                - (1.0 / 24.0 - g / 2.0 + 1.5 * g * g - g * g * g),
        ]
    }

    /// Transformed weights of the solution (stage 6 completes it) and of the embedded one.
    const SOLUTION: [f64; S] = [A51, A52, A53, A54, 1.0, 1.0];
    const EMBEDDED: [f64; S] = [A51, A52, A53, A54, 1.0, 0.0];

    #[test]
    fn solution_meets_the_order_conditions_up_to_order_four() {
        for (k, r) in order_residuals(SOLUTION).iter().enumerate() {
            // Hairer & Wanner, Solving ODEs II, sec. IV.7, Table 7.1: Rodas4 has order 4
            assert!(r.abs() < 1e-12, "condition {k}: residual {r:e}");
        }
    }

    #[test]
    fn embedded_solution_has_order_three_not_four() {
        let r = order_residuals(EMBEDDED);
        for (k, r) in r[..4].iter().enumerate() {
            // Hairer & Wanner, Solving ODEs II, sec. VI.4: the embedded solution has order 3
            assert!(r.abs() < 1e-12, "condition {k}: residual {r:e}");
        }
        assert!(r[4..].iter().any(|r| r.abs() > 1e-3), "{r:?}");
    }

    #[test]
    fn stage_times_and_time_weights_are_the_row_sums() {
        let (alpha, gamma, _) = original_form(SOLUTION);
        let c = [0.0, C2, C3, C4, 1.0, 1.0];
        let d = [D1, D2, D3, D4, 0.0, 0.0];
        for i in 0..S {
            // [analytic] c_i = sum_j alpha_ij and d_i = sum_j gamma_ij (Hairer & Wanner,
            // Solving ODEs II, sec. IV.7, the non-autonomous form)
            let alpha_sum: f64 = alpha[i].iter().sum();
            let gamma_sum: f64 = gamma[i].iter().sum();
            assert!((alpha_sum - c[i]).abs() < 1e-12, "stage {i}: {alpha_sum}");
            assert!((gamma_sum - d[i]).abs() < 1e-12, "stage {i}: {gamma_sum}");
        }
    }
}
