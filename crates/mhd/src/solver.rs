//! The finite-volume MHD update: boundaries, reconstruction, Riemann fluxes, SSP Runge–Kutta
//! stages and floors.

use crate::config::{Boundary, Integrator, Limiter, Reconstruction, RiemannKind, SolverConfig};
use crate::grid::Grid;
use crate::physics::{fast2, Gas};
use crate::riemann::{hlld, hlle, HLLD_DEGENERACY_EPS};
use crate::state::State;
use crate::MhdError;

/// What one call of [`MhdSolver::step`] did. Fluxes through the boundaries are
/// time-integrated over the step (per unit area, code units), positive = into the domain.
///
/// The floor amounts are the contributions to the *end-of-step* totals, i.e. a floor applied
/// in an intermediate Runge–Kutta stage is weighted by the factor with which that stage enters
/// the final combination. With these, for every conserved quantity q,
/// `Σ q Δx (after) = Σ q Δx (before) + inflow_left + inflow_right (+ floor_mass / floor_energy)`
/// holds to round-off.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct StepReport {
    /// Cells whose density was raised to the floor (counted once per stage and cell).
    pub rho_floor_hits: u64,
    /// Cells whose pressure was raised to the floor (counted once per stage and cell).
    pub p_floor_hits: u64,
    /// Energy per unit area added by floors.
    pub floor_energy: f64,
    /// Mass per unit area added by floors.
    pub floor_mass: f64,
    /// Faces where HLLD fell back to HLLE (summed over stages).
    pub hlld_fallbacks: u64,
    /// Cells whose stage update was redone with first-order HLLE fluxes on both faces because
    /// ρ or p fell below its floor (physics-detail §1.5 safeguard; the neighbours share the
    /// recomputed face fluxes, so conservation is kept). Floors apply only if still bad.
    pub first_order_redos: u64,
    /// Time-integrated conserved fluxes into the domain through the left face
    /// (ρ, ρv_x, ρv_y, ρv_z, E, b̃_y, b̃_z).
    pub inflow_left: [f64; 7],
    /// Time-integrated conserved fluxes into the domain through the right face.
    pub inflow_right: [f64; 7],
}

/// The MHD solver: configuration plus preallocated scratch arrays (no allocation per step).
#[derive(Debug, Clone)]
pub struct MhdSolver {
    config: SolverConfig,
    grid: Grid,
    gas: Gas,
    eps_deg: f64,
    /// Primitive state per storage cell, one array per variable (structure of arrays).
    prim: [Vec<f64>; 7],
    /// Reconstructed state at the right edge (x_{j+1/2}⁻) of cell j, one array per variable.
    w_plus: [Vec<f64>; 7],
    /// Reconstructed state at the left edge (x_{j−1/2}⁺) of cell j, one array per variable.
    w_minus: [Vec<f64>; 7],
    /// flux[k][j] = component k of the flux through face j + 1/2.
    flux: [Vec<f64>; 7],
    /// Copy of the state at the start of the step (7 arrays, storage length).
    u0: [Vec<f64>; 7],
    /// Interior cells flagged by the last stage update (ρ or p below floor, or non-finite);
    /// capacity n, so pushing never allocates.
    bad: Vec<usize>,
}

/// Stage coefficients (a, w): U ← a U⁰ + (1 − a)(U + Δt L(U)); w is the weight of the stage's
/// fluxes in the final update (Shu & Osher 1988).
const RK2: [(f64, f64); 2] = [(0.0, 0.5), (0.5, 0.5)];
const RK3: [(f64, f64); 3] = [(0.0, 1.0 / 6.0), (0.75, 1.0 / 6.0), (1.0 / 3.0, 2.0 / 3.0)];

/// Smaller of two numbers by one comparison (compiles to a single `minpd`-type select).
/// Used only on non-negative operands whose NaN case is masked by the caller's final
/// `a * b > 0` test, so it gives bit-for-bit the same limiter value as `f64::min`.
#[inline(always)]
fn min_sel(x: f64, y: f64) -> f64 {
    if x < y {
        x
    } else {
        y
    }
}

/// minmod(a, b) = ½[sgn a + sgn b] min(|a|, |b|) (branch-free form).
#[inline(always)]
fn minmod(a: f64, b: f64) -> f64 {
    let m = min_sel(a.abs(), b.abs()).copysign(a);
    if a * b > 0.0 {
        m
    } else {
        0.0
    }
}

/// van Leer harmonic limiter (a b + |a b|)/(a + b).
#[inline(always)]
fn van_leer(a: f64, b: f64) -> f64 {
    let ab = a * b;
    if ab > 0.0 {
        2.0 * ab / (a + b)
    } else {
        0.0
    }
}

/// Monotonized central limiter ½[sgn a + sgn b] min(2|a|, 2|b|, |a + b|/2) (van Leer 1977).
#[inline(always)]
fn mc(a: f64, b: f64) -> f64 {
    let m = min_sel(min_sel(2.0 * a.abs(), 2.0 * b.abs()), 0.5 * (a + b).abs()).copysign(a);
    if a * b > 0.0 {
        m
    } else {
        0.0
    }
}

/// PLM face states of cells `lo..=hi` with limiter `lim` (monomorphised per limiter), on
/// structure-of-arrays storage: one pass per variable (vectorisable), then one positivity
/// pass that drops a cell to first order if a face ρ or p would be below the floor.
#[allow(clippy::too_many_arguments)]
#[inline(always)]
fn plm_faces(
    prim: &[Vec<f64>; 7],
    wp: &mut [Vec<f64>; 7],
    wm: &mut [Vec<f64>; 7],
    lo: usize,
    hi: usize,
    gas: &Gas,
    rho_min: f64,
    p_min: f64,
    lim: impl Fn(f64, f64) -> f64,
) {
    // Cells lo..=hi need neighbours lo−1 ..= hi+1.
    let nc = hi + 1 - lo;
    for k in 0..7 {
        let q = &prim[k][lo - 1..hi + 2];
        let p = &mut wp[k][lo..=hi];
        let m = &mut wm[k][lo..=hi];
        if gas.iso && k == 4 {
            // Isothermal: dp = c_s² dρ (p = c_s² ρ exactly tracks ρ).
            let r = &prim[0][lo - 1..hi + 2];
            for (((p, m), c), rw) in p
                .iter_mut()
                .zip(m.iter_mut())
                .zip(&q[1..=nc])
                .zip(r.windows(3))
            {
                let dw = gas.cs2 * (0.5 * lim(rw[1] - rw[0], rw[2] - rw[1]));
                *p = c + dw;
                *m = c - dw;
            }
            continue;
        }
        // Three shifted views (left neighbour, cell, right neighbour) so the loop vectorises.
        let it = p
            .iter_mut()
            .zip(m.iter_mut())
            .zip(&q[..nc])
            .zip(&q[1..=nc])
            .zip(&q[2..]);
        for ((((p, m), &a), &c), &b) in it {
            let dw = 0.5 * lim(c - a, b - c);
            *p = c + dw;
            *m = c - dw;
        }
    }
    // Positivity: drop to first order if a face ρ or p would be below the floor.
    for j in lo..=hi {
        let bad = wp[0][j] <= rho_min
            || wm[0][j] <= rho_min
            || (!gas.iso && (wp[4][j] <= p_min || wm[4][j] <= p_min));
        if bad {
            for k in 0..7 {
                wp[k][j] = prim[k][j];
                wm[k][j] = prim[k][j];
            }
        }
    }
}

impl MhdSolver {
    /// Validates `config` and allocates scratch for `grid`.
    pub fn new(config: SolverConfig, grid: Grid) -> Result<Self, MhdError> {
        config.validate()?;
        if grid.ng < Grid::GHOSTS {
            return Err(MhdError::InvalidConfig {
                key: "ng",
                value: grid.ng.to_string(),
                allowed: "at least Grid::GHOSTS = 2 ghost cells",
            });
        }
        let len = grid.len();
        let z = || std::array::from_fn(|_| vec![0.0; len]);
        Ok(Self {
            config,
            grid,
            gas: Gas::new(&config.eos),
            eps_deg: HLLD_DEGENERACY_EPS,
            prim: z(),
            w_plus: z(),
            w_minus: z(),
            flux: z(),
            u0: std::array::from_fn(|_| vec![0.0; len]),
            bad: Vec::with_capacity(grid.n),
        })
    }

    /// The configuration.
    pub fn config(&self) -> &SolverConfig {
        &self.config
    }

    /// The grid.
    pub fn grid(&self) -> &Grid {
        &self.grid
    }

    /// Sets ε_deg of the HLLD degeneracy test (default [`HLLD_DEGENERACY_EPS`] = 1e-12).
    pub fn set_hlld_degeneracy_eps(&mut self, eps: f64) -> Result<(), MhdError> {
        if !(eps.is_finite() && eps > 0.0 && eps < 1.0) {
            return Err(MhdError::InvalidConfig {
                key: "hlld_degeneracy_eps",
                value: eps.to_string(),
                allowed: "a finite number with 0 < eps < 1",
            });
        }
        self.eps_deg = eps;
        Ok(())
    }

    fn check_state(&self, state: &State) -> Result<(), MhdError> {
        let contiguous = [
            &state.rho, &state.mx, &state.my, &state.mz, &state.en, &state.by, &state.bz,
        ]
        .iter()
        .all(|a| a.len() == self.grid.len() && a.as_slice().is_some());
        if state.grid != self.grid || !contiguous {
            return Err(MhdError::InvalidConfig {
                key: "state.grid",
                value: format!("{:?}", state.grid),
                allowed:
                    "the grid the solver was created with (contiguous arrays of length grid.len())",
            });
        }
        Ok(())
    }

    /// Fills the ghost cells of `state` according to the boundary conditions.
    ///
    /// Periodic: copies from the other end. Outflow: zero gradient (copy of the edge cell).
    /// Reflecting: mirror image with ρv_x reversed (b̃_y, b̃_z, E copied; common practice for a
    /// wall; with b̃_x ≠ 0 the wall is not a perfect conductor). Inflow: the fixed primitive
    /// state (isothermal: its p is ignored), with the state's b̃_x.
    pub fn apply_boundaries(&self, state: &mut State) {
        let g = self.grid;
        let (ng, n) = (g.ng, g.n);
        let eos = self.config.eos;
        let len = g.len();
        for (side, bc) in [
            (0u8, self.config.boundaries.left),
            (1u8, self.config.boundaries.right),
        ] {
            for k in 0..ng {
                // ghost index and its source
                let (ghost, src_per, src_out, src_ref) = if side == 0 {
                    let gh = ng - 1 - k;
                    (gh, gh + n, ng, ng + k)
                } else {
                    let gh = ng + n + k;
                    (gh, gh - n, ng + n - 1, ng + n - 1 - k)
                };
                let src_per = src_per.min(len - 1);
                let src_ref = src_ref.min(len - 1);
                match bc {
                    Boundary::Periodic => copy_cell(state, src_per, ghost, 1.0),
                    Boundary::Outflow => copy_cell(state, src_out, ghost, 1.0),
                    Boundary::Reflecting => copy_cell(state, src_ref, ghost, -1.0),
                    Boundary::Inflow(w) => state.set_primitive(ghost, &w, &eos),
                }
            }
        }
    }

    /// Largest stable time step: cfl · Δx / max(|v_x| + c_f) over interior cells.
    /// Returns `f64::INFINITY` for a state without any signal speed (impossible for ρ, p > 0).
    pub fn max_dt(&self, state: &State) -> f64 {
        let gas = self.gas;
        let bx = state.bx;
        let r = self.grid.interior();
        let rho = &state.rho.as_slice().expect("contiguous")[r.clone()];
        let mx = &state.mx.as_slice().expect("contiguous")[r.clone()];
        let my = &state.my.as_slice().expect("contiguous")[r.clone()];
        let mz = &state.mz.as_slice().expect("contiguous")[r.clone()];
        let en = &state.en.as_slice().expect("contiguous")[r.clone()];
        let by = &state.by.as_slice().expect("contiguous")[r.clone()];
        let bz = &state.bz.as_slice().expect("contiguous")[r];
        let mut smax: f64 = 0.0;
        for i in 0..rho.len() {
            let d = rho[i];
            let inv = 1.0 / d;
            let (u, v, w) = (mx[i] * inv, my[i] * inv, mz[i] * inv);
            let p = if gas.iso {
                gas.cs2 * d
            } else {
                gas.gm1
                    * (en[i]
                        - 0.5 * d * (u * u + v * v + w * w)
                        - 0.5 * (bx * bx + by[i] * by[i] + bz[i] * bz[i]))
            };
            let a2 = gas.a2(d, p.max(0.0));
            let s = u.abs() + fast2(a2, d, bx, by[i], bz[i]).sqrt();
            smax = smax.max(s);
        }
        if smax > 0.0 && smax.is_finite() {
            self.config.cfl * self.grid.dx() / smax
        } else if smax.is_nan() {
            0.0
        } else {
            f64::INFINITY
        }
    }

    /// Advances `state` by `dt` (one full multi-stage step).
    ///
    /// Errors if `dt` is not finite and positive, if the state does not belong to the solver's
    /// grid, or if a non-finite state appears (floors cannot repair a NaN).
    pub fn step(&mut self, state: &mut State, dt: f64) -> Result<StepReport, MhdError> {
        if !(dt.is_finite() && dt > 0.0) {
            return Err(MhdError::InvalidConfig {
                key: "dt",
                value: dt.to_string(),
                allowed: "a finite number > 0",
            });
        }
        self.check_state(state)?;
        let mut rep = StepReport::default();
        // Save U⁰.
        {
            let arrs = state_slices(state);
            for (dst, src) in self.u0.iter_mut().zip(arrs.iter()) {
                dst.copy_from_slice(src);
            }
        }
        let stages: &[(f64, f64)] = match self.config.integrator {
            Integrator::SspRk2 => &RK2,
            Integrator::SspRk3 => &RK3,
        };
        let ns = stages.len();
        for (s, &(a, w)) in stages.iter().enumerate() {
            // Factor with which a change made at the end of this stage enters U^{n+1}.
            let carry: f64 = stages[s + 1..ns].iter().map(|&(a2, _)| 1.0 - a2).product();
            self.apply_boundaries(state);
            self.fluxes(state, &mut rep)?;
            self.update(state, a, dt);
            rep.first_order_redos += self.redo_bad_cells(state, a, dt);
            // Boundary fluxes, weighted by the stage weight.
            let (jl, jr) = (self.grid.ng - 1, self.grid.ng + self.grid.n - 1);
            for k in 0..7 {
                rep.inflow_left[k] += w * dt * self.flux[k][jl];
                rep.inflow_right[k] -= w * dt * self.flux[k][jr];
            }
            self.floors(state, carry, &mut rep)?;
        }
        Ok(rep)
    }

    /// Primitives, reconstruction and Riemann fluxes at the n + 1 interior faces.
    fn fluxes(&mut self, state: &State, rep: &mut StepReport) -> Result<(), MhdError> {
        let gas = self.gas;
        let bx = state.bx;
        let bx2h = 0.5 * bx * bx;
        let len = self.grid.len();
        let ng = self.grid.ng;
        let n = self.grid.n;
        {
            let [rho, mx, my, mz, en, by, bz] = state_slices(state);
            let [pd, pu, pv, pw, pp, pby, pbz] = &mut self.prim;
            let it = pd[..len]
                .iter_mut()
                .zip(&mut pu[..len])
                .zip(&mut pv[..len])
                .zip(&mut pw[..len])
                .zip(&mut pp[..len])
                .zip(rho.iter().zip(mx).zip(my).zip(mz).zip(en).zip(by).zip(bz));
            for (((((od, ou), ov), ow), op), ((((((&d, &mx), &my), &mz), &en), &by), &bz)) in it {
                let inv = 1.0 / d;
                let (u, v, w) = (mx * inv, my * inv, mz * inv);
                *op = if gas.iso {
                    gas.cs2 * d
                } else {
                    gas.gm1
                        * (en
                            - 0.5 * d * (u * u + v * v + w * w)
                            - bx2h
                            - 0.5 * (by * by + bz * bz))
                };
                *od = d;
                *ou = u;
                *ov = v;
                *ow = w;
            }
            pby[..len].copy_from_slice(by);
            pbz[..len].copy_from_slice(bz);
        }
        // Reconstruction for cells ng−1 ..= ng+n (the neighbours of the interior faces).
        let (lo, hi) = (ng - 1, ng + n);
        match self.config.reconstruction {
            Reconstruction::FirstOrder | Reconstruction::PlmCharacteristic(_) => {
                for k in 0..7 {
                    self.w_plus[k][lo..=hi].copy_from_slice(&self.prim[k][lo..=hi]);
                    self.w_minus[k][lo..=hi].copy_from_slice(&self.prim[k][lo..=hi]);
                }
            }
            Reconstruction::Plm(lim) => {
                let rho_min = self.config.floors.rho_min;
                let p_min = self.config.floors.p_min;
                let prim = &self.prim;
                let wp = &mut self.w_plus;
                let wm = &mut self.w_minus;
                match lim {
                    Limiter::Minmod => {
                        plm_faces(prim, wp, wm, lo, hi, &gas, rho_min, p_min, minmod)
                    }
                    Limiter::VanLeer => {
                        plm_faces(prim, wp, wm, lo, hi, &gas, rho_min, p_min, van_leer)
                    }
                    Limiter::Mc => plm_faces(prim, wp, wm, lo, hi, &gas, rho_min, p_min, mc),
                }
            }
        }
        // Riemann problems at faces j + 1/2, j = ng−1 ..= ng+n−1: left state w_plus[j],
        // right state w_minus[j + 1]. All slices below have length nf, so the indexing in
        // the loop is proven in range once by the slicing.
        let p_floor = self.config.floors.p_min;
        let eps = self.eps_deg;
        let use_hlld = matches!(self.config.riemann, RiemannKind::Hlld) && !gas.iso;
        let nf = hi - lo;
        let wl: [&[f64]; 7] = std::array::from_fn(|k| &self.w_plus[k][lo..hi]);
        let wr: [&[f64]; 7] = std::array::from_fn(|k| &self.w_minus[k][lo + 1..=hi]);
        let [f0, f1, f2, f3, f4, f5, f6] = &mut self.flux;
        let (f0, f1, f2, f3) = (
            &mut f0[lo..hi],
            &mut f1[lo..hi],
            &mut f2[lo..hi],
            &mut f3[lo..hi],
        );
        let (f4, f5, f6) = (&mut f4[lo..hi], &mut f5[lo..hi], &mut f6[lo..hi]);
        let mut fallbacks = 0u64;
        for i in 0..nf {
            let l = [
                wl[0][i], wl[1][i], wl[2][i], wl[3][i], wl[4][i], wl[5][i], wl[6][i],
            ];
            let r = [
                wr[0][i], wr[1][i], wr[2][i], wr[3][i], wr[4][i], wr[5][i], wr[6][i],
            ];
            let f = if use_hlld {
                match hlld(&l, &r, bx, &gas, p_floor, eps) {
                    Some(f) => f,
                    None => {
                        fallbacks += 1;
                        hlle(&l, &r, bx, &gas)
                    }
                }
            } else {
                hlle(&l, &r, bx, &gas)
            };
            f0[i] = f[0];
            f1[i] = f[1];
            f2[i] = f[2];
            f3[i] = f[3];
            f4[i] = f[4];
            f5[i] = f[5];
            f6[i] = f[6];
        }
        rep.hlld_fallbacks += fallbacks;
        Ok(())
    }

    /// U ← a U⁰ + (1 − a)(U − Δt/Δx (F_{j+1/2} − F_{j−1/2})) on the interior (one pass per
    /// variable); flags cells below the floors (or non-finite) in `self.bad`.
    fn update(&mut self, state: &mut State, a: f64, dt: f64) {
        let dtdx = dt / self.grid.dx();
        let r = self.grid.interior();
        let b = 1.0 - a;
        let iso = self.gas.iso;
        let gm1 = self.gas.gm1;
        let bx2h = 0.5 * state.bx * state.bx;
        let (rho_min, p_min) = (self.config.floors.rho_min, self.config.floors.p_min);
        let bad = &mut self.bad;
        bad.clear();
        let arrs = state_slices_mut(state);
        for (k, u) in arrs.into_iter().enumerate() {
            if iso && k == 4 {
                continue;
            }
            let u = &mut u[r.clone()];
            let fl = &self.flux[k][r.start - 1..r.end - 1];
            let fr = &self.flux[k][r.clone()];
            let u0 = &self.u0[k][r.clone()];
            for (((u, &u0), &f0), &f1) in u.iter_mut().zip(u0).zip(fl).zip(fr) {
                *u = a * u0 + b * (*u - dtdx * (f1 - f0));
            }
        }
        // Flag cells for the safeguard / floors (NaN fails every comparison).
        let [rho, mx, my, mz, en, by, bz] = state_slices(state);
        let it = rho[r.clone()]
            .iter()
            .zip(&mx[r.clone()])
            .zip(&my[r.clone()])
            .zip(&mz[r.clone()])
            .zip(&en[r.clone()])
            .zip(&by[r.clone()])
            .zip(&bz[r.clone()]);
        for (i, ((((((&d, &mx), &my), &mz), &en), &by), &bz)) in it.enumerate() {
            let ok = if iso {
                d >= rho_min && (mx + my + mz + by + bz).is_finite()
            } else {
                let p = gm1
                    * (en
                        - 0.5 * (mx * mx + my * my + mz * mz) / d
                        - bx2h
                        - 0.5 * (by * by + bz * bz));
                d >= rho_min && d.is_finite() && p >= p_min && p.is_finite()
            };
            if !ok {
                bad.push(r.start + i);
            }
        }
    }

    /// Safeguard of physics-detail §1.5: every interior cell whose updated ρ or p is below its
    /// floor (or not finite) gets both face fluxes recomputed with HLLE from the first-order
    /// (cell-centred) stage-input states; the flux change is applied to both cells sharing
    /// each face. Returns the number of cells treated.
    fn redo_bad_cells(&mut self, state: &mut State, a: f64, dt: f64) -> u64 {
        let gas = self.gas;
        let bx = state.bx;
        let b = 1.0 - a;
        let dtdx = dt / self.grid.dx();
        let (rho_min, p_min) = (self.config.floors.rho_min, self.config.floors.p_min);
        let r = self.grid.interior();
        let good = |w: &[f64; 7]| {
            w[0] > rho_min && (gas.iso || w[4] > p_min) && w.iter().all(|x| x.is_finite())
        };
        let mut count = 0;
        let [rho, mx, my, mz, en, by, bz] = state_slices_mut(state);
        for idx in 0..self.bad.len() {
            let j = self.bad[idx];
            count += 1;
            for f in [j - 1, j] {
                let wl: [f64; 7] = std::array::from_fn(|k| self.prim[k][f]);
                let wr: [f64; 7] = std::array::from_fn(|k| self.prim[k][f + 1]);
                if !(good(&wl) && good(&wr)) {
                    continue;
                }
                let new = hlle(&wl, &wr, bx, &gas);
                let mut delta = [0.0; 7];
                for k in 0..7 {
                    delta[k] = new[k] - self.flux[k][f];
                    self.flux[k][f] = new[k];
                }
                if gas.iso {
                    delta[4] = 0.0;
                }
                // Cell f (left of the face) loses b Δt/Δx δF, cell f + 1 gains it.
                for (c, sgn) in [(f, -1.0), (f + 1, 1.0)] {
                    if c < r.start || c >= r.end {
                        continue;
                    }
                    let s = sgn * b * dtdx;
                    rho[c] += s * delta[0];
                    mx[c] += s * delta[1];
                    my[c] += s * delta[2];
                    mz[c] += s * delta[3];
                    en[c] += s * delta[4];
                    by[c] += s * delta[5];
                    bz[c] += s * delta[6];
                }
            }
        }
        count
    }

    /// Density and pressure floors on the interior; every hit is counted and its mass/energy
    /// (weighted by `carry`) reported.
    fn floors(
        &mut self,
        state: &mut State,
        carry: f64,
        rep: &mut StepReport,
    ) -> Result<(), MhdError> {
        let gas = self.gas;
        let bx = state.bx;
        let dx = self.grid.dx();
        let (rho_min, p_min) = (self.config.floors.rho_min, self.config.floors.p_min);
        let grid = self.grid;
        let [rho, mx, my, mz, en, by, bz] = state_slices_mut(state);
        let r = grid.interior();
        for idx in 0..self.bad.len() {
            let c = self.bad[idx];
            for j in [c - 1, c, c + 1] {
                if j < r.start || j >= r.end {
                    continue;
                }
                floor_cell(
                    j,
                    &grid,
                    gas,
                    bx,
                    dx,
                    rho_min,
                    p_min,
                    carry,
                    rep,
                    [
                        &mut *rho, &mut *mx, &mut *my, &mut *mz, &mut *en, &mut *by, &mut *bz,
                    ],
                )?;
            }
        }
        Ok(())
    }
}

/// Applies the density and pressure floors to storage cell `j` (see [`MhdSolver::step`]).
#[allow(clippy::too_many_arguments)]
fn floor_cell(
    j: usize,
    grid: &Grid,
    gas: Gas,
    bx: f64,
    dx: f64,
    rho_min: f64,
    p_min: f64,
    carry: f64,
    rep: &mut StepReport,
    arrs: [&mut [f64]; 7],
) -> Result<(), MhdError> {
    let [rho, mx, my, mz, en, by, bz] = arrs;
    let mut d = rho[j];
    let vals = [d, mx[j], my[j], mz[j], en[j], by[j], bz[j]];
    if vals.iter().any(|x| !x.is_finite()) {
        return Err(MhdError::Unphysical {
            cell: j - grid.ng,
            x: grid.x_center(j),
            what: format!("non-finite conserved state {vals:?}"),
        });
    }
    if d < rho_min {
        rep.rho_floor_hits += 1;
        rep.floor_mass += carry * (rho_min - d) * dx;
        d = rho_min;
        rho[j] = d;
    }
    if !gas.iso {
        let kin = 0.5 * (mx[j] * mx[j] + my[j] * my[j] + mz[j] * mz[j]) / d;
        let mag = 0.5 * (bx * bx + by[j] * by[j] + bz[j] * bz[j]);
        let p = gas.gm1 * (en[j] - kin - mag);
        if p < p_min {
            let de = (p_min - p) * gas.inv_gm1;
            rep.p_floor_hits += 1;
            rep.floor_energy += carry * de * dx;
            en[j] += de;
        }
    }
    Ok(())
}

/// Copies storage cell `src` to `dst`; `sign_vx` multiplies ρv_x.
fn copy_cell(s: &mut State, src: usize, dst: usize, sign_vx: f64) {
    s.rho[dst] = s.rho[src];
    s.mx[dst] = sign_vx * s.mx[src];
    s.my[dst] = s.my[src];
    s.mz[dst] = s.mz[src];
    s.en[dst] = s.en[src];
    s.by[dst] = s.by[src];
    s.bz[dst] = s.bz[src];
}

fn state_slices(s: &State) -> [&[f64]; 7] {
    [
        s.rho.as_slice().expect("contiguous State array"),
        s.mx.as_slice().expect("contiguous State array"),
        s.my.as_slice().expect("contiguous State array"),
        s.mz.as_slice().expect("contiguous State array"),
        s.en.as_slice().expect("contiguous State array"),
        s.by.as_slice().expect("contiguous State array"),
        s.bz.as_slice().expect("contiguous State array"),
    ]
}

fn state_slices_mut(s: &mut State) -> [&mut [f64]; 7] {
    [
        s.rho.as_slice_mut().expect("contiguous State array"),
        s.mx.as_slice_mut().expect("contiguous State array"),
        s.my.as_slice_mut().expect("contiguous State array"),
        s.mz.as_slice_mut().expect("contiguous State array"),
        s.en.as_slice_mut().expect("contiguous State array"),
        s.by.as_slice_mut().expect("contiguous State array"),
        s.bz.as_slice_mut().expect("contiguous State array"),
    ]
}
