//! Exact Riemann problem for a gas + cosmic-ray composite fluid with the CRs advected by the
//! gas (no diffusion, no streaming, κ → 0), as set up by Pfrommer, Springel, Enßlin & Jubelgas
//! 2006 (MNRAS 367, 113) for their two-fluid shock-tube tests.
//!
//! Model: ∂t ρ + ∂x(ρu) = 0, ∂t(ρu) + ∂x(ρu² + P_g + P_c) = 0, total energy
//! E = ρu²/2 + P_g/(γ_g − 1) + P_c/(γ_c − 1) conserved, and the CR "entropy"
//! P_c ρ^{−γ_c} advected (CRs adiabatic everywhere, also through the shock: no shock
//! acceleration). Waves:
//! * rarefaction: both components adiabatic (P_g ∝ ρ^{γ_g}, P_c ∝ ρ^{γ_c}); the Riemann
//!   invariant u ± ∫ c dρ/ρ with c² = (γ_g P_g + γ_c P_c)/ρ is evaluated by Gauss–Legendre
//!   quadrature in ln ρ (no closed form for two components);
//! * contact: total pressure and velocity continuous;
//! * shock: P_c2 = P_c1 (ρ2/ρ1)^{γ_c}; ρ2 from the Hugoniot e2 − e1 = ½(P1 + P2)(1/ρ1 − 1/ρ2)
//!   for the total specific internal energy e = [P_g/(γ_g−1) + P_c/(γ_c−1)]/ρ and total
//!   pressure P = P_g + P_c (mass, momentum and total-energy jump conditions).
//!
//! The star pressure solves f_L(p) + f_R(p) + u_R − u_L = 0 as in Toro 2009 (*Riemann Solvers
//! and Numerical Methods for Fluid Dynamics*, 3rd ed., Springer, §4.2), with f_K the velocity
//! jump across wave K. Any consistent units (ρ [mass/length³], u [length/time], pressures
//! [pressure]). Vacuum-generating data are rejected.

use super::quad::GaussLegendre;
use super::{adiabatic, finite, non_negative, positive, RefError};

/// Primitive state of the composite fluid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TwoFluidState {
    /// Gas density ρ > 0.
    pub rho: f64,
    /// Velocity u.
    pub u: f64,
    /// Gas pressure P_g > 0.
    pub pg: f64,
    /// CR pressure P_c ≥ 0.
    pub pc: f64,
}

impl TwoFluidState {
    /// Total pressure P_g + P_c.
    pub fn p_total(&self) -> f64 {
        self.pg + self.pc
    }
}

/// One of the two non-linear waves.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Wave {
    /// Shock moving at `speed`.
    Shock {
        /// Shock speed [length/time].
        speed: f64,
    },
    /// Rarefaction fan between the characteristic speeds `head` and `tail`.
    Rarefaction {
        /// Speed of the fan edge adjacent to the undisturbed state.
        head: f64,
        /// Speed of the fan edge adjacent to the star state.
        tail: f64,
    },
}

/// Solved two-fluid Riemann problem (self-similar in ξ = (x − x0)/t).
#[derive(Debug, Clone)]
pub struct TwoFluidRiemann {
    /// Left state.
    pub left: TwoFluidState,
    /// Right state.
    pub right: TwoFluidState,
    /// Gas adiabatic index γ_g.
    pub gamma_g: f64,
    /// CR adiabatic index γ_c.
    pub gamma_c: f64,
    /// Total pressure in the star region.
    pub p_star: f64,
    /// Velocity of the contact.
    pub u_star: f64,
    /// State between the left wave and the contact.
    pub star_left: TwoFluidState,
    /// State between the contact and the right wave.
    pub star_right: TwoFluidState,
    /// Left wave.
    pub left_wave: Wave,
    /// Right wave.
    pub right_wave: Wave,
}

/// The adiabat of one side: P_g = P_gs (ρ/ρ_s)^γg, P_c = P_cs (ρ/ρ_s)^γc.
#[derive(Clone, Copy)]
struct Side {
    s: TwoFluidState,
    gg: f64,
    gc: f64,
}

impl Side {
    fn pressures(&self, rho: f64) -> (f64, f64) {
        let r = rho / self.s.rho;
        (self.s.pg * r.powf(self.gg), self.s.pc * r.powf(self.gc))
    }
    fn sound(&self, rho: f64) -> f64 {
        let (pg, pc) = self.pressures(rho);
        ((self.gg * pg + self.gc * pc) / rho).sqrt()
    }
    /// ∫_{ρa}^{ρb} c dρ/ρ = ∫ c d ln ρ (Gauss–Legendre, 24 points per panel of width ≤ 0.2 in ln ρ).
    fn invariant_integral(&self, rho_a: f64, rho_b: f64) -> f64 {
        let (la, lb) = (rho_a.ln(), rho_b.ln());
        let panels = ((lb - la).abs() / 0.2).ceil().max(1.0) as usize;
        gl24().integrate_panels(la, lb, panels, |l| self.sound(l.exp()))
    }
    /// Density on the adiabat with total pressure p (Newton in ln ρ, monotone).
    fn rho_on_adiabat(&self, p: f64) -> Result<f64, RefError> {
        let mut l = self.s.rho.ln() + (p / self.s.p_total()).ln() / self.gg.max(self.gc);
        let mut last = f64::INFINITY;
        for _ in 0..100 {
            let rho = l.exp();
            let (pg, pc) = self.pressures(rho);
            // Newton on ln P(ln ρ) = ln p (ln P is convex and increasing in ln ρ)
            let dl = ((pg + pc) / p).ln() * (pg + pc) / (self.gg * pg + self.gc * pc);
            l -= dl;
            if dl.abs() < 1e-15 * l.abs().max(1.0) || (dl.abs() < 1e-13 && dl.abs() >= last) {
                return Ok(l.exp());
            }
            last = dl.abs();
        }
        Err(RefError::NoConvergence {
            what: "density on the adiabat",
        })
    }
    /// Shock: post-shock density for total pressure p > P_s (Hugoniot, bisection).
    fn shock_density(&self, p: f64) -> Result<f64, RefError> {
        let s = self.s;
        let p1 = s.p_total();
        let e1 = (s.pg / (self.gg - 1.0) + s.pc / (self.gc - 1.0)) / s.rho;
        let h = |rho2: f64| {
            let pc2 = s.pc * (rho2 / s.rho).powf(self.gc);
            let pg2 = p - pc2;
            let e2 = (pg2 / (self.gg - 1.0) + pc2 / (self.gc - 1.0)) / rho2;
            e2 - e1 + 0.5 * (p + p1) * (1.0 / rho2 - 1.0 / s.rho)
        };
        let gmin = self.gg.min(self.gc);
        let mut hi = s.rho * (gmin + 1.0) / (gmin - 1.0);
        if s.pc > 0.0 {
            hi = hi.min(s.rho * (p / s.pc).powf(1.0 / self.gc));
        }
        let mut lo = s.rho;
        if !(h(lo) > 0.0 && h(hi) < 0.0) {
            return Err(RefError::NoConvergence {
                what: "shock Hugoniot bracket",
            });
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if h(mid) > 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo <= 1e-16 * hi {
                break;
            }
        }
        Ok(0.5 * (lo + hi))
    }
    /// Velocity jump f(p) across the wave (Toro 2009 §4.2 convention), and the star density.
    fn f(&self, p: f64) -> Result<(f64, f64), RefError> {
        let p1 = self.s.p_total();
        if p > p1 {
            let rho2 = self.shock_density(p)?;
            let f = ((p - p1) * (1.0 / self.s.rho - 1.0 / rho2)).sqrt();
            Ok((f, rho2))
        } else {
            let rho2 = self.rho_on_adiabat(p)?;
            Ok((-self.invariant_integral(rho2, self.s.rho), rho2))
        }
    }
}

fn gl24() -> &'static GaussLegendre {
    static RULE: std::sync::OnceLock<GaussLegendre> = std::sync::OnceLock::new();
    RULE.get_or_init(|| GaussLegendre::new(24))
}

fn check_state(s: &TwoFluidState) -> Result<(), RefError> {
    positive("rho", s.rho)?;
    finite("u", s.u)?;
    positive("pg", s.pg)?;
    non_negative("pc", s.pc)?;
    Ok(())
}

impl TwoFluidRiemann {
    /// Solves the Riemann problem. `gamma_g`, `gamma_c` > 1 (typically 5/3 and 4/3).
    pub fn solve(
        left: TwoFluidState,
        right: TwoFluidState,
        gamma_g: f64,
        gamma_c: f64,
    ) -> Result<Self, RefError> {
        check_state(&left)?;
        check_state(&right)?;
        adiabatic("gamma_g", gamma_g)?;
        adiabatic("gamma_c", gamma_c)?;
        let sl = Side {
            s: left,
            gg: gamma_g,
            gc: gamma_c,
        };
        let sr = Side {
            s: right,
            gg: gamma_g,
            gc: gamma_c,
        };
        let du = right.u - left.u;
        // Vacuum: the two full rarefactions to p = 0 cannot absorb the velocity difference.
        let vac = sl.invariant_integral(1e-300f64.max(left.rho * 1e-12), left.rho)
            + sr.invariant_integral(1e-300f64.max(right.rho * 1e-12), right.rho)
            - du;
        if vac <= 0.0 {
            return Err(RefError::Vacuum { condition: vac });
        }
        let g = |p: f64| -> Result<f64, RefError> { Ok(sl.f(p)?.0 + sr.f(p)?.0 + du) };
        let pmax = left.p_total().max(right.p_total());
        let mut lo = 1e-14 * left.p_total().min(right.p_total());
        let mut hi = pmax;
        while g(hi)? < 0.0 {
            lo = hi;
            hi *= 4.0;
            if hi > 1e30 * pmax {
                return Err(RefError::NoConvergence {
                    what: "star pressure bracket",
                });
            }
        }
        if g(lo)? > 0.0 {
            return Err(RefError::NoConvergence {
                what: "star pressure bracket (near vacuum)",
            });
        }
        for _ in 0..300 {
            let mid = (0.5 * (lo.ln() + hi.ln())).exp();
            if g(mid)? < 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo <= 4e-16 * hi {
                break;
            }
        }
        let p_star = 0.5 * (lo + hi);
        let (fl, rho_l) = sl.f(p_star)?;
        let (fr, rho_r) = sr.f(p_star)?;
        let u_star = 0.5 * (left.u + right.u) + 0.5 * (fr - fl);
        let star = |side: &Side, rho: f64| {
            let pc = side.s.pc * (rho / side.s.rho).powf(gamma_c);
            TwoFluidState {
                rho,
                u: u_star,
                pg: p_star - pc,
                pc,
            }
        };
        let star_left = star(&sl, rho_l);
        let star_right = star(&sr, rho_r);
        let left_wave = if p_star > left.p_total() {
            let j = ((p_star - left.p_total()) / (1.0 / left.rho - 1.0 / rho_l)).sqrt();
            Wave::Shock {
                speed: left.u - j / left.rho,
            }
        } else {
            Wave::Rarefaction {
                head: left.u - sl.sound(left.rho),
                tail: u_star - sl.sound(rho_l),
            }
        };
        let right_wave = if p_star > right.p_total() {
            let j = ((p_star - right.p_total()) / (1.0 / right.rho - 1.0 / rho_r)).sqrt();
            Wave::Shock {
                speed: right.u + j / right.rho,
            }
        } else {
            Wave::Rarefaction {
                head: right.u + sr.sound(right.rho),
                tail: u_star + sr.sound(rho_r),
            }
        };
        Ok(Self {
            left,
            right,
            gamma_g,
            gamma_c,
            p_star,
            u_star,
            star_left,
            star_right,
            left_wave,
            right_wave,
        })
    }

    /// State at similarity coordinate ξ = (x − x0)/t.
    pub fn sample_xi(&self, xi: f64) -> TwoFluidState {
        let (side, wave, star, sign) = if xi < self.u_star {
            (self.left, self.left_wave, self.star_left, -1.0)
        } else {
            (self.right, self.right_wave, self.star_right, 1.0)
        };
        // sign = −1: left-facing wave (outside means ξ smaller), +1: right-facing.
        match wave {
            Wave::Shock { speed } => {
                if sign * (xi - speed) > 0.0 {
                    side
                } else {
                    star
                }
            }
            Wave::Rarefaction { head, tail } => {
                if sign * (xi - head) >= 0.0 {
                    side
                } else if sign * (xi - tail) <= 0.0 {
                    star
                } else {
                    self.fan(side, star.rho, sign, xi)
                }
            }
        }
    }

    /// State at position x and time t > 0 for the discontinuity initially at x0.
    pub fn sample(&self, x: f64, t: f64, x0: f64) -> Result<TwoFluidState, RefError> {
        finite("x", x)?;
        positive("t", t)?;
        finite("x0", x0)?;
        Ok(self.sample_xi((x - x0) / t))
    }

    /// Inside a fan: ρ with u(ρ) + sign·c(ρ) = ξ, u(ρ) = u_s − sign ∫_ρ^{ρ_s} c dρ'/ρ'.
    fn fan(&self, s: TwoFluidState, rho_star: f64, sign: f64, xi: f64) -> TwoFluidState {
        let side = Side {
            s,
            gg: self.gamma_g,
            gc: self.gamma_c,
        };
        let speed = |rho: f64| {
            let u = s.u - sign * side.invariant_integral(rho, s.rho);
            (u, u + sign * side.sound(rho))
        };
        // ρ between ρ* (tail) and ρ_s (head); characteristic speed is monotone in ρ.
        let (mut lo, mut hi) = (rho_star.min(s.rho).ln(), rho_star.max(s.rho).ln());
        let f_lo = speed(lo.exp()).1 - xi;
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            let f_mid = speed(mid.exp()).1 - xi;
            if (f_mid > 0.0) == (f_lo > 0.0) {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo < 1e-15 {
                break;
            }
        }
        let rho = (0.5 * (lo + hi)).exp();
        let (pg, pc) = side.pressures(rho);
        TwoFluidState {
            rho,
            u: speed(rho).0,
            pg,
            pc,
        }
    }
}

/// Convenience: solve and sample the two-fluid Riemann problem at (x, t), discontinuity at x0.
pub fn two_fluid_riemann(
    left: TwoFluidState,
    right: TwoFluidState,
    gamma_g: f64,
    gamma_c: f64,
    x: f64,
    t: f64,
    x0: f64,
) -> Result<TwoFluidState, RefError> {
    TwoFluidRiemann::solve(left, right, gamma_g, gamma_c)?.sample(x, t, x0)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn st(rho: f64, u: f64, pg: f64, pc: f64) -> TwoFluidState {
        TwoFluidState { rho, u, pg, pc }
    }

    /// Independent single-fluid exact solver (Toro 2009 §4.2–4.4, closed forms), for comparison.
    struct Toro {
        g: f64,
        l: (f64, f64, f64),
        r: (f64, f64, f64),
        p: f64,
        u: f64,
    }
    impl Toro {
        fn fk(g: f64, (rho, _u, pk): (f64, f64, f64), p: f64) -> f64 {
            let a = (g * pk / rho).sqrt();
            if p > pk {
                let aa = 2.0 / ((g + 1.0) * rho);
                let bb = (g - 1.0) / (g + 1.0) * pk;
                (p - pk) * (aa / (p + bb)).sqrt()
            } else {
                2.0 * a / (g - 1.0) * ((p / pk).powf((g - 1.0) / (2.0 * g)) - 1.0)
            }
        }
        fn new(g: f64, l: (f64, f64, f64), r: (f64, f64, f64)) -> Self {
            let (mut lo, mut hi) = (1e-12, 100.0);
            for _ in 0..200 {
                let m = 0.5 * (lo + hi);
                if Self::fk(g, l, m) + Self::fk(g, r, m) + r.1 - l.1 < 0.0 {
                    lo = m
                } else {
                    hi = m
                }
            }
            let p = 0.5 * (lo + hi);
            let u = 0.5 * (l.1 + r.1) + 0.5 * (Self::fk(g, r, p) - Self::fk(g, l, p));
            Toro { g, l, r, p, u }
        }
        /// (ρ, u, p) at ξ; only the left-rarefaction / right-shock pattern is needed here.
        fn sample(&self, xi: f64) -> (f64, f64, f64) {
            let g = self.g;
            let (rl, ul, pl) = self.l;
            let (rr, ur, pr) = self.r;
            if xi < self.u {
                let al = (g * pl / rl).sqrt();
                let rho_s = rl * (self.p / pl).powf(1.0 / g);
                let a_s = al * (self.p / pl).powf((g - 1.0) / (2.0 * g));
                if xi < ul - al {
                    (rl, ul, pl)
                } else if xi > self.u - a_s {
                    (rho_s, self.u, self.p)
                } else {
                    // Toro (4.56)
                    let c = 2.0 / (g + 1.0) + (g - 1.0) / ((g + 1.0) * al) * (ul - xi);
                    (
                        rl * c.powf(2.0 / (g - 1.0)),
                        2.0 / (g + 1.0) * (al + (g - 1.0) / 2.0 * ul + xi),
                        pl * c.powf(2.0 * g / (g - 1.0)),
                    )
                }
            } else {
                let ar = (g * pr / rr).sqrt();
                let q = self.p / pr;
                let s = ur + ar * ((g + 1.0) / (2.0 * g) * q + (g - 1.0) / (2.0 * g)).sqrt();
                let rho_s = rr * (q + (g - 1.0) / (g + 1.0)) / ((g - 1.0) / (g + 1.0) * q + 1.0);
                if xi > s {
                    (rr, ur, pr)
                } else {
                    (rho_s, self.u, self.p)
                }
            }
        }
    }

    /// Toro 2009 Test 1 (Sod): p* = 0.30313, u* = 0.92745 (γ = 1.4), CR pressure zero.
    #[test]
    fn reduces_to_toro_test_1() {
        let r = TwoFluidRiemann::solve(
            st(1.0, 0.0, 1.0, 0.0),
            st(0.125, 0.0, 0.1, 0.0),
            1.4,
            4.0 / 3.0,
        )
        .unwrap();
        assert!((r.p_star - 0.30313).abs() < 5e-6, "p* = {}", r.p_star);
        assert!((r.u_star - 0.92745).abs() < 5e-6, "u* = {}", r.u_star);
        let t = Toro::new(1.4, (1.0, 0.0, 1.0), (0.125, 0.0, 0.1));
        assert!((r.p_star - t.p).abs() < 1e-13 && (r.u_star - t.u).abs() < 1e-13);
        for i in 0..=200 {
            let xi = -2.0 + 4.0 * i as f64 / 200.0;
            let a = r.sample_xi(xi);
            let b = t.sample(xi);
            assert!(
                (a.rho - b.0).abs() < 1e-12
                    && (a.u - b.1).abs() < 1e-12
                    && (a.pg - b.2).abs() < 1e-12,
                "ξ={xi}: {a:?} {b:?}"
            );
            assert_eq!(a.pc, 0.0);
        }
    }

    /// γ_c = γ_g: the composite is a single γ-fluid of total pressure, however the pressure is split.
    #[test]
    fn equal_gammas_reduce_to_single_fluid() {
        for g in [1.4, 5.0 / 3.0] {
            let r =
                TwoFluidRiemann::solve(st(1.0, 0.0, 0.3, 0.7), st(0.125, 0.0, 0.09, 0.01), g, g)
                    .unwrap();
            let t = Toro::new(g, (1.0, 0.0, 1.0), (0.125, 0.0, 0.1));
            assert!(
                (r.p_star - t.p).abs() < 1e-12 * t.p,
                "{} vs {}",
                r.p_star,
                t.p
            );
            for i in 0..=100 {
                let xi = -2.0 + 4.0 * i as f64 / 100.0;
                let a = r.sample_xi(xi);
                let b = t.sample(xi);
                assert!(
                    (a.rho - b.0).abs() < 1e-11 && (a.u - b.1).abs() < 1e-11,
                    "ξ={xi}: {a:?} {b:?}"
                );
                assert!((a.p_total() - b.2).abs() < 1e-11);
            }
        }
    }

    /// Our CR-dominated shock tube (γ_g = 5/3, γ_c = 4/3): shock jump conditions to round-off.
    #[test]
    fn shock_jump_conditions() {
        let (gg, gc) = (5.0 / 3.0, 4.0 / 3.0);
        let r =
            TwoFluidRiemann::solve(st(1.0, 0.0, 1.0, 2.0), st(0.2, 0.0, 0.1, 0.1), gg, gc).unwrap();
        let Wave::Shock { speed } = r.right_wave else {
            panic!("expected a right shock")
        };
        let (a, b) = (r.right, r.star_right);
        let cons = |s: TwoFluidState| {
            let e = 0.5 * s.rho * s.u * s.u + s.pg / (gg - 1.0) + s.pc / (gc - 1.0);
            [s.rho, s.rho * s.u, e]
        };
        let flux = |s: TwoFluidState| {
            let e = 0.5 * s.rho * s.u * s.u + s.pg / (gg - 1.0) + s.pc / (gc - 1.0);
            [
                s.rho * s.u,
                s.rho * s.u * s.u + s.p_total(),
                (e + s.p_total()) * s.u,
            ]
        };
        let (ua, ub, fa, fb) = (cons(a), cons(b), flux(a), flux(b));
        for j in 0..3 {
            let res = speed * (ub[j] - ua[j]) - (fb[j] - fa[j]);
            assert!(
                res.abs() < 1e-13 * (fb[j].abs() + fa[j].abs()),
                "component {j}: {res}"
            );
        }
        // CRs adiabatically compressed, gas heated beyond its adiabat (entropy rises).
        assert!((b.pc / b.rho.powf(gc) - a.pc / a.rho.powf(gc)).abs() < 1e-13);
        assert!(b.pg / b.rho.powf(gg) > a.pg / a.rho.powf(gg));
        assert!(b.rho / a.rho < 7.0 && b.rho > a.rho);
    }

    /// Fan: both entropies constant, ξ = u − c (self-similarity), du/dρ = −c/ρ.
    #[test]
    fn rarefaction_invariants() {
        let (gg, gc) = (5.0 / 3.0, 4.0 / 3.0);
        let r =
            TwoFluidRiemann::solve(st(1.0, 0.0, 1.0, 2.0), st(0.2, 0.0, 0.1, 0.1), gg, gc).unwrap();
        let Wave::Rarefaction { head, tail } = r.left_wave else {
            panic!("expected a left fan")
        };
        let l = r.left;
        for i in 1..50 {
            let xi = head + (tail - head) * i as f64 / 50.0;
            let s = r.sample_xi(xi);
            assert!((s.pg / s.rho.powf(gg) - l.pg / l.rho.powf(gg)).abs() < 1e-13);
            assert!((s.pc / s.rho.powf(gc) - l.pc / l.rho.powf(gc)).abs() < 1e-13);
            let c = ((gg * s.pg + gc * s.pc) / s.rho).sqrt();
            assert!((s.u - c - xi).abs() < 1e-12);
            let h = 1e-4 * (tail - head);
            let (a, b) = (r.sample_xi(xi - h), r.sample_xi(xi + h));
            let dudrho = (b.u - a.u) / (b.rho - a.rho);
            assert!(
                (dudrho + c / s.rho).abs() < 1e-6 * c / s.rho,
                "ξ={xi}: {dudrho}"
            );
        }
    }

    /// Integral conservation: ∫U dx over [−X, X] at time t equals the initial integral minus
    /// t·(F(right) − F(left)), the solution integrated piecewise between its waves.
    #[test]
    fn global_conservation() {
        let (gg, gc) = (5.0 / 3.0, 4.0 / 3.0);
        for (l, rt) in [
            (st(1.0, 0.0, 1.0, 2.0), st(0.2, 0.0, 0.1, 0.1)),
            (st(0.5, 0.3, 0.2, 1.0), st(1.0, -0.4, 0.5, 0.05)),
            (st(1.0, -0.5, 0.4, 0.4), st(1.0, 0.5, 0.4, 0.4)),
        ] {
            let r = TwoFluidRiemann::solve(l, rt, gg, gc).unwrap();
            let (x_half, t) = (10.0, 1.0);
            let u = |s: TwoFluidState| {
                [
                    s.rho,
                    s.rho * s.u,
                    0.5 * s.rho * s.u * s.u + s.pg / (gg - 1.0) + s.pc / (gc - 1.0),
                ]
            };
            let f = |s: TwoFluidState| {
                let e = u(s)[2];
                [
                    s.rho * s.u,
                    s.rho * s.u * s.u + s.p_total(),
                    (e + s.p_total()) * s.u,
                ]
            };
            let mut breaks = vec![-x_half, r.u_star * t, x_half];
            for w in [r.left_wave, r.right_wave] {
                match w {
                    Wave::Shock { speed } => breaks.push(speed * t),
                    Wave::Rarefaction { head, tail } => {
                        breaks.push(head * t);
                        breaks.push(tail * t)
                    }
                }
            }
            breaks.sort_by(|a, b| a.partial_cmp(b).unwrap());
            let rule = GaussLegendre::new(24);
            for j in 0..3 {
                let mut total = 0.0;
                for w in breaks.windows(2) {
                    total += rule.integrate_panels(w[0], w[1], 8, |x| u(r.sample_xi(x / t))[j]);
                }
                let initial = x_half * (u(l)[j] + u(rt)[j]);
                let expected = initial - t * (f(rt)[j] - f(l)[j]);
                assert!(
                    (total - expected).abs() < 1e-10 * expected.abs().max(1.0),
                    "component {j}: {total} vs {expected}"
                );
            }
        }
    }

    #[test]
    fn bad_input_and_vacuum() {
        let e = TwoFluidRiemann::solve(st(-1.0, 0.0, 1.0, 0.0), st(1.0, 0.0, 1.0, 0.0), 1.4, 1.4)
            .unwrap_err();
        assert!(e.to_string().contains("rho"));
        assert!(
            TwoFluidRiemann::solve(st(1.0, 0.0, 1.0, 0.0), st(1.0, 0.0, 1.0, 0.0), 1.0, 1.4)
                .is_err()
        );
        let e = TwoFluidRiemann::solve(
            st(1.0, -20.0, 0.4, 0.1),
            st(1.0, 20.0, 0.4, 0.1),
            5.0 / 3.0,
            4.0 / 3.0,
        )
        .unwrap_err();
        assert!(matches!(e, RefError::Vacuum { .. }));
    }
}
