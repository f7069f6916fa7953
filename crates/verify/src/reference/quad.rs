//! Gauss–Legendre quadrature (nodes by Newton iteration on P_n, Golub & Welsch-free classic
//! construction, e.g. Press et al. 2007 *Numerical Recipes* 3rd ed. §4.6 (common practice))
//! and composite panel rules.

/// Nodes and weights of the n-point Gauss–Legendre rule on [−1, 1].
#[derive(Debug, Clone)]
pub struct GaussLegendre {
    /// Nodes in (−1, 1), ascending.
    pub nodes: Vec<f64>,
    /// Weights (sum 2).
    pub weights: Vec<f64>,
}

impl GaussLegendre {
    /// Builds the n-point rule (n ≥ 1). Exact for polynomials of degree ≤ 2n − 1.
    pub fn new(n: usize) -> Self {
        let n = n.max(1);
        let mut nodes = vec![0.0; n];
        let mut weights = vec![0.0; n];
        let m = n.div_ceil(2);
        for i in 0..m {
            // Tricomi initial guess for the i-th root (descending).
            let mut z = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
            let mut dp = 1.0;
            for _ in 0..100 {
                let (p, d) = legendre_and_derivative(n, z);
                dp = d;
                let dz = p / d;
                z -= dz;
                if dz.abs() < 1e-16 {
                    break;
                }
            }
            let (_, d) = legendre_and_derivative(n, z);
            dp = if d.is_finite() { d } else { dp };
            let w = 2.0 / ((1.0 - z * z) * dp * dp);
            nodes[i] = -z;
            nodes[n - 1 - i] = z;
            weights[i] = w;
            weights[n - 1 - i] = w;
        }
        Self { nodes, weights }
    }

    /// ∫_a^b f dx with this rule on one panel.
    pub fn integrate(&self, a: f64, b: f64, mut f: impl FnMut(f64) -> f64) -> f64 {
        let h = 0.5 * (b - a);
        let c = 0.5 * (a + b);
        self.nodes
            .iter()
            .zip(&self.weights)
            .map(|(&x, &w)| w * f(c + h * x))
            .sum::<f64>()
            * h
    }

    /// ∫_a^b f dx with `panels` equal panels of this rule.
    pub fn integrate_panels(
        &self,
        a: f64,
        b: f64,
        panels: usize,
        mut f: impl FnMut(f64) -> f64,
    ) -> f64 {
        let panels = panels.max(1);
        let dx = (b - a) / panels as f64;
        (0..panels)
            .map(|j| {
                let lo = a + dx * j as f64;
                self.integrate(lo, lo + dx, &mut f)
            })
            .sum()
    }
}

/// P_n(x) and P_n'(x) by the three-term recurrence.
fn legendre_and_derivative(n: usize, x: f64) -> (f64, f64) {
    let mut p0 = 1.0;
    let mut p1 = x;
    if n == 0 {
        return (1.0, 0.0);
    }
    for k in 2..=n {
        let kf = k as f64;
        let p2 = ((2.0 * kf - 1.0) * x * p1 - (kf - 1.0) * p0) / kf;
        p0 = p1;
        p1 = p2;
    }
    let d = n as f64 * (x * p1 - p0) / (x * x - 1.0);
    (p1, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_for_degree_2n_minus_1() {
        for n in [1usize, 2, 5, 16, 24] {
            let g = GaussLegendre::new(n);
            assert!((g.weights.iter().sum::<f64>() - 2.0).abs() < 1e-14);
            for deg in 0..(2 * n) {
                let num = g.integrate(0.0, 1.0, |x| x.powi(deg as i32));
                let exact = 1.0 / (deg as f64 + 1.0);
                assert!((num - exact).abs() < 1e-14, "n={n} deg={deg} {num} {exact}");
            }
            if n <= 5 {
                // degree 2n is NOT integrated exactly (shows the check can fail)
                let num = g.integrate(-1.0, 1.0, |x| x.powi(2 * n as i32));
                assert!((num - 2.0 / (2.0 * n as f64 + 1.0)).abs() > 1e-6);
            }
        }
    }

    #[test]
    fn composite_gaussian_integral() {
        let g = GaussLegendre::new(16);
        let v = g.integrate_panels(-10.0, 10.0, 20, |x| (-x * x).exp());
        assert!((v - std::f64::consts::PI.sqrt()).abs() < 1e-14);
    }
}
