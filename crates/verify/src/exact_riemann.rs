//! Exact Riemann solver of the 1D Euler equations for an ideal gas
//! (Toro 2009, Riemann Solvers and Numerical Methods for Fluid Dynamics, 3rd ed., Springer,
//! ch. 4: pressure function §4.2–4.3, Newton iteration §4.3.2, sampling §4.5).
//!
//! Independent of the finite-volume code: used as the reference of the Sod check.

/// A primitive state (ρ, u, p) of the Euler equations.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EulerState {
    /// Density.
    pub rho: f64,
    /// Velocity.
    pub u: f64,
    /// Pressure.
    pub p: f64,
}

/// Solution of one Riemann problem: star pressure and velocity plus the data needed to sample.
#[derive(Debug, Clone, Copy)]
pub struct ExactRiemann {
    /// Left state.
    pub left: EulerState,
    /// Right state.
    pub right: EulerState,
    /// Adiabatic index.
    pub gamma: f64,
    /// Star-region pressure p*.
    pub p_star: f64,
    /// Star-region velocity u*.
    pub u_star: f64,
}

/// f_K(p) and its derivative (Toro 2009 eqs. 4.6–4.7, 4.37).
fn pressure_function(p: f64, k: &EulerState, g: f64) -> (f64, f64) {
    let a = (g * k.p / k.rho).sqrt();
    if p > k.p {
        // shock
        let ak = 2.0 / ((g + 1.0) * k.rho);
        let bk = (g - 1.0) / (g + 1.0) * k.p;
        let q = (ak / (p + bk)).sqrt();
        ((p - k.p) * q, q * (1.0 - 0.5 * (p - k.p) / (bk + p)))
    } else {
        // rarefaction
        let e = (g - 1.0) / (2.0 * g);
        let f = 2.0 * a / (g - 1.0) * ((p / k.p).powf(e) - 1.0);
        let df = 1.0 / (k.rho * a) * (p / k.p).powf(-(g + 1.0) / (2.0 * g));
        (f, df)
    }
}

impl ExactRiemann {
    /// Solves the Riemann problem (Newton iteration on f_L + f_R + Δu = 0, Toro eq. 4.5),
    /// to a relative pressure change below 1e-14. `None` on vacuum generation.
    pub fn solve(left: EulerState, right: EulerState, gamma: f64) -> Option<Self> {
        let g = gamma;
        let al = (g * left.p / left.rho).sqrt();
        let ar = (g * right.p / right.rho).sqrt();
        let du = right.u - left.u;
        if 2.0 * (al + ar) / (g - 1.0) <= du {
            return None; // vacuum
        }
        // Two-rarefaction initial guess (Toro eq. 4.46), positive.
        let e = (g - 1.0) / (2.0 * g);
        let mut p = ((al + ar - 0.5 * (g - 1.0) * du)
            / (al / left.p.powf(e) + ar / right.p.powf(e)))
        .powf(1.0 / e);
        p = p.max(1e-14 * (left.p + right.p));
        for _ in 0..100 {
            let (fl, dfl) = pressure_function(p, &left, g);
            let (fr, dfr) = pressure_function(p, &right, g);
            let mut pn = p - (fl + fr + du) / (dfl + dfr);
            if pn <= 0.0 {
                pn = 0.5 * p;
            }
            let change = 2.0 * (pn - p).abs() / (pn + p);
            p = pn;
            if change < 1e-14 {
                break;
            }
        }
        let (fl, _) = pressure_function(p, &left, g);
        let (fr, _) = pressure_function(p, &right, g);
        let u = 0.5 * (left.u + right.u) + 0.5 * (fr - fl);
        Some(Self {
            left,
            right,
            gamma,
            p_star: p,
            u_star: u,
        })
    }

    /// Samples the self-similar solution at ξ = (x − x0)/t (Toro 2009 §4.5).
    pub fn sample(&self, xi: f64) -> EulerState {
        let g = self.gamma;
        let (ps, us) = (self.p_star, self.u_star);
        let gp = (g + 1.0) / (2.0 * g);
        let gm = (g - 1.0) / (2.0 * g);
        if xi <= us {
            let k = self.left;
            let a = (g * k.p / k.rho).sqrt();
            if ps > k.p {
                let s = k.u - a * (gp * ps / k.p + gm).sqrt();
                if xi <= s {
                    k
                } else {
                    let r = (ps / k.p + (g - 1.0) / (g + 1.0))
                        / ((g - 1.0) / (g + 1.0) * ps / k.p + 1.0);
                    EulerState {
                        rho: k.rho * r,
                        u: us,
                        p: ps,
                    }
                }
            } else {
                let head = k.u - a;
                let a_star = a * (ps / k.p).powf(gm);
                let tail = us - a_star;
                if xi <= head {
                    k
                } else if xi >= tail {
                    EulerState {
                        rho: k.rho * (ps / k.p).powf(1.0 / g),
                        u: us,
                        p: ps,
                    }
                } else {
                    let c = 2.0 / (g + 1.0) + (g - 1.0) / ((g + 1.0) * a) * (k.u - xi);
                    EulerState {
                        rho: k.rho * c.powf(2.0 / (g - 1.0)),
                        u: 2.0 / (g + 1.0) * (a + 0.5 * (g - 1.0) * k.u + xi),
                        p: k.p * c.powf(2.0 * g / (g - 1.0)),
                    }
                }
            }
        } else {
            let k = self.right;
            let a = (g * k.p / k.rho).sqrt();
            if ps > k.p {
                let s = k.u + a * (gp * ps / k.p + gm).sqrt();
                if xi >= s {
                    k
                } else {
                    let r = (ps / k.p + (g - 1.0) / (g + 1.0))
                        / ((g - 1.0) / (g + 1.0) * ps / k.p + 1.0);
                    EulerState {
                        rho: k.rho * r,
                        u: us,
                        p: ps,
                    }
                }
            } else {
                let head = k.u + a;
                let a_star = a * (ps / k.p).powf(gm);
                let tail = us + a_star;
                if xi >= head {
                    k
                } else if xi <= tail {
                    EulerState {
                        rho: k.rho * (ps / k.p).powf(1.0 / g),
                        u: us,
                        p: ps,
                    }
                } else {
                    let c = 2.0 / (g + 1.0) - (g - 1.0) / ((g + 1.0) * a) * (k.u - xi);
                    EulerState {
                        rho: k.rho * c.powf(2.0 / (g - 1.0)),
                        u: 2.0 / (g + 1.0) * (-a + 0.5 * (g - 1.0) * k.u + xi),
                        p: k.p * c.powf(2.0 * g / (g - 1.0)),
                    }
                }
            }
        }
    }

    /// Cell average of the density over [x_a, x_b] at time t (discontinuity at x0), by
    /// composite Gauss–Legendre quadrature (8 sub-intervals × 3 points); exact up to the
    /// few cells that contain a discontinuity, where the error is O(Δx/8) of the jump.
    pub fn cell_average_density(&self, x_a: f64, x_b: f64, x0: f64, t: f64) -> f64 {
        const GL: [(f64, f64); 3] = [
            (-0.774_596_669_241_483_4, 5.0 / 9.0),
            (0.0, 8.0 / 9.0),
            (0.774_596_669_241_483_4, 5.0 / 9.0),
        ];
        let m = 8;
        let h = (x_b - x_a) / m as f64;
        let mut sum = 0.0;
        for i in 0..m {
            let c = x_a + (i as f64 + 0.5) * h;
            for (q, w) in GL {
                let x = c + 0.5 * h * q;
                sum += 0.5 * w * self.sample((x - x0) / t).rho;
            }
        }
        sum / m as f64
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn toro_test1_star_values() {
        // Toro 2009, Table 4.3 (Test 1): p* = 0.30313, u* = 0.92745.
        let l = EulerState {
            rho: 1.0,
            u: 0.0,
            p: 1.0,
        };
        let r = EulerState {
            rho: 0.125,
            u: 0.0,
            p: 0.1,
        };
        let s = ExactRiemann::solve(l, r, 1.4).unwrap();
        assert!((s.p_star - 0.30313).abs() < 1e-5, "{}", s.p_star);
        assert!((s.u_star - 0.92745).abs() < 1e-5, "{}", s.u_star);
    }
}
