//! The CR solver: boundaries, transport (PLM + HLL-type flux + SSP-RK2, subcycled) and the
//! exchange stage.

use crate::damping::{WaveDamping, WaveDirection};
use crate::exchange::{add_transfer, exchange_cell, Cell, CellCtx, StallReason, Transfer};
use crate::params::{AlfvenDensity, Coupling, CrBoundary, CrParams, Limiter, TransportModel};
use crate::state::CrState;
use crate::CrError;
use ndarray::Array1;
use sluice_mhd::{Eos, Grid, State};

/// What one `transport` or `exchange` call did. Energies are per unit area (∫ dx), code units,
/// time-integrated over the call.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct CrReport {
    /// Transport subcycles taken (0 for `exchange`).
    pub subcycles: usize,
    /// Exchange substeps summed over cells and stages.
    pub exchange_substeps: u64,
    /// Exchange substeps accepted without meeting the tolerances.
    pub tolerance_failures: u64,
    /// Exchange substeps rejected (halved and retried), summed over cells and stages.
    pub exchange_rejected: u64,
    /// Cell exchanges that started from a non-realizable flux |F| > c_r e_c and limited it
    /// conservatively (momentum to the gas, kinetic energy from the CRs; `exchange` docs).
    pub flux_limited: u64,
    /// CR energy transferred to waves (streaming-instability growth; in the streaming model
    /// directly to heat).
    pub cr_to_waves: f64,
    /// Wave energy turned into gas heat by damping (streaming model: the streaming heating).
    pub waves_to_heat: f64,
    /// Work done by CRs on the gas (kinetic energy given to the gas by the CR force).
    pub work_on_gas: f64,
    /// Work done by the wave-pressure gradient on the gas, −∫ v ∂_x(P_+ + P_−) dx dt.
    pub wave_pressure_work: f64,
    /// Energy put into waves by the floor (taken from the gas).
    pub floor_energy: f64,
    /// CR + wave energy that entered through the left boundary.
    pub energy_in_left: f64,
    /// CR + wave energy that entered through the right boundary.
    pub energy_in_right: f64,
    /// Momentum (F/c_r² + wave pressure) that entered through the left boundary.
    pub momentum_in_left: f64,
    /// Momentum that entered through the right boundary.
    pub momentum_in_right: f64,
}

impl CrReport {
    fn add_transfer(&mut self, t: &Transfer, w: f64) {
        self.cr_to_waves += w * t.cr_to_waves;
        self.waves_to_heat += w * t.waves_to_heat;
        self.work_on_gas += w * t.work_on_gas;
        self.floor_energy += w * t.floor;
        self.exchange_substeps += t.substeps as u64;
        self.tolerance_failures += t.tol_failures as u64;
        self.exchange_rejected += t.rejected as u64;
        self.flux_limited += t.flux_limited as u64;
    }
}

/// Result of [`auto_c_r`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AutoCr {
    /// The chosen reduced speed of light.
    pub c_r: f64,
    /// Largest MHD signal speed max(|v_x| + c_f) over the interior.
    pub v_max: f64,
    /// c_r / v_max.
    pub ratio: f64,
}

/// Fast magnetosonic speed of cell `j`.
fn fast_speed(gas: &State, j: usize, eos: &Eos) -> f64 {
    let w = gas.primitive(j, eos);
    let a2 = match *eos {
        Eos::Ideal { gamma } => gamma * w.p.max(0.0) / w.rho,
        Eos::Isothermal { cs } => cs * cs,
    };
    let bx2 = gas.bx * gas.bx / w.rho;
    let b2 = bx2 + (w.by * w.by + w.bz * w.bz) / w.rho;
    let s = a2 + b2;
    (0.5 * (s + (s * s - 4.0 * a2 * bx2).max(0.0).sqrt())).sqrt()
}

/// c_r = factor × max over interior cells of (|v_x| + c_f) (physics-detail §2.8, §7).
/// `factor` must be ≥ 10.
pub fn auto_c_r(gas: &State, eos: &Eos, factor: f64) -> Result<AutoCr, CrError> {
    if !(factor.is_finite() && factor >= 10.0) {
        return Err(CrError::InvalidParameter {
            key: "c_r_factor",
            value: factor.to_string(),
            allowed: "a finite number >= 10",
        });
    }
    let mut vmax: f64 = 0.0;
    for j in gas.grid.interior() {
        let v = (gas.mx[j] / gas.rho[j]).abs() + fast_speed(gas, j, eos);
        vmax = vmax.max(v);
    }
    if !(vmax.is_finite() && vmax > 0.0) {
        return Err(CrError::InvalidParameter {
            key: "c_r",
            value: format!("auto (max signal speed {vmax})"),
            allowed: "auto needs a finite positive MHD signal speed; give c_r as a number",
        });
    }
    Ok(AutoCr {
        c_r: factor * vmax,
        v_max: vmax,
        ratio: factor,
    })
}

/// Face fluxes and scratch of one flux evaluation (no allocation per step).
#[derive(Debug, Clone)]
struct Scratch {
    // Per storage cell.
    v: Vec<f64>,
    va: Vec<f64>,
    sig: Vec<f64>,
    slope: [Vec<f64>; 4],
    // Per face (n + 1).
    fl: [Vec<f64>; 4], // e_c, F, e_R, e_L
    pr: Vec<f64>,
    pl: Vec<f64>,
    // RK copies of the interior (storage length for simplicity).
    u0: [Vec<f64>; 6], // e_c, F, e_R, e_L, m, E
    grad_pc: Vec<f64>,
}

/// The CR solver: parameters, per-cell ion fraction, scratch arrays and the last heating rates.
#[derive(Debug, Clone)]
pub struct CrSolver {
    params: CrParams,
    grid: Grid,
    ion_fraction: Array1<f64>,
    heating: Array1<f64>,
    scratch: Scratch,
}

impl CrSolver {
    /// Validates the parameters and allocates scratch for `grid`.
    pub fn new(params: CrParams, grid: Grid) -> Result<Self, CrError> {
        params.validate()?;
        let n = grid.len();
        let nf = grid.n + 1;
        let z = |k: usize| vec![0.0; k];
        let scratch = Scratch {
            v: z(n),
            va: z(n),
            sig: z(n),
            slope: [z(n), z(n), z(n), z(n)],
            fl: [z(nf), z(nf), z(nf), z(nf)],
            pr: z(nf),
            pl: z(nf),
            u0: [z(n), z(n), z(n), z(n), z(n), z(n)],
            grad_pc: z(n),
        };
        Ok(Self {
            params,
            grid,
            ion_fraction: Array1::ones(n),
            heating: Array1::zeros(n),
            scratch,
        })
    }

    /// The parameters.
    pub fn params(&self) -> &CrParams {
        &self.params
    }

    /// Sets the reduced speed of light (e.g. after [`auto_c_r`]).
    pub fn set_c_r(&mut self, c_r: f64) -> Result<(), CrError> {
        let mut p = self.params;
        p.c_r = c_r;
        p.validate()?;
        self.params = p;
        Ok(())
    }

    /// Sets the per-cell ion mass fraction x_i ∈ (0, 1] (storage length) used with
    /// [`AlfvenDensity::Ion`].
    pub fn set_ion_fraction(&mut self, xi: &[f64]) -> Result<(), CrError> {
        if xi.len() != self.grid.len() {
            return Err(CrError::GridMismatch {
                what: "ion_fraction",
                expected: self.grid.len(),
                found: xi.len(),
            });
        }
        if let Some((j, &x)) = xi.iter().enumerate().find(|(_, &x)| !(x > 0.0 && x <= 1.0)) {
            return Err(CrError::InvalidParameter {
                key: "ion_fraction",
                value: format!("{x} in cell {j}"),
                allowed: "0 < x_i <= 1",
            });
        }
        self.ion_fraction
            .as_slice_mut()
            .expect("contiguous")
            .copy_from_slice(xi);
        Ok(())
    }

    /// Time-averaged gas heating rate by wave damping (streaming model: streaming heating) of the
    /// last `transport`/`exchange` call per storage cell [energy/(volume·time)].
    pub fn heating_rate(&self) -> &Array1<f64> {
        &self.heating
    }

    /// Checks that the gas and CR arrays fit the grid and that the field is along x.
    pub fn check(&self, cr: &CrState, gas: &State) -> Result<(), CrError> {
        let n = self.grid.len();
        for (what, len) in [
            ("gas", gas.rho.len()),
            ("e_c", cr.e_c.len()),
            ("f", cr.f.len()),
            ("e_plus", cr.e_plus.len()),
            ("e_minus", cr.e_minus.len()),
        ] {
            if len != n {
                return Err(CrError::GridMismatch {
                    what,
                    expected: n,
                    found: len,
                });
            }
        }
        if !(gas.bx != 0.0 && gas.bx.is_finite()) {
            return Err(CrError::FieldNotAlongX {
                cell: None,
                bx: gas.bx,
                b_perp: 0.0,
            });
        }
        let tol = 1e-10 * gas.bx.abs();
        for j in self.grid.interior() {
            let bp = (gas.by[j] * gas.by[j] + gas.bz[j] * gas.bz[j]).sqrt();
            if bp.is_nan() || bp > tol {
                return Err(CrError::FieldNotAlongX {
                    cell: Some(j - self.grid.ng),
                    bx: gas.bx,
                    b_perp: bp,
                });
            }
        }
        Ok(())
    }

    #[inline]
    pub(crate) fn alfven_pub(&self, gas: &State, j: usize) -> f64 {
        self.alfven(gas, j)
    }

    #[inline]
    fn alfven(&self, gas: &State, j: usize) -> f64 {
        let rho_a = match self.params.alfven_density {
            AlfvenDensity::Total => gas.rho[j],
            AlfvenDensity::Ion => gas.rho[j] * self.ion_fraction[j],
        };
        gas.bx.abs() / rho_a.sqrt()
    }

    /// One transport subcycle step: cfl · Δx / max(|v| + c_r/√3, |v| + v_a) over interior cells.
    pub fn max_dt_cr(&self, gas: &State) -> f64 {
        let cw = self.params.c_r / 3f64.sqrt();
        let mut s: f64 = 0.0;
        for j in self.grid.interior() {
            let v = (gas.mx[j] / gas.rho[j]).abs();
            s = s.max(v + cw.max(self.alfven(gas, j)));
        }
        self.params.cfl * self.grid.dx() / s
    }

    /// Largest step `transport` accepts: `max_subcycles` × [`Self::max_dt_cr`].
    pub fn max_dt(&self, gas: &State) -> f64 {
        self.params.max_subcycles as f64 * self.max_dt_cr(gas)
    }

    /// Fills the CR ghost cells (x-labelled waves) according to the CR boundaries.
    pub fn apply_boundaries(&self, cr: &mut CrState, gas: &State) {
        let g = &self.grid;
        let (ng, n) = (g.ng, g.n);
        let pos = gas.bx >= 0.0;
        let CrState {
            e_c,
            f,
            e_plus,
            e_minus,
        } = cr;
        let (er, el) = if pos {
            (e_plus, e_minus)
        } else {
            (e_minus, e_plus)
        };
        let ec = e_c.as_slice_mut().expect("contiguous");
        let ff = f.as_slice_mut().expect("contiguous");
        let er = er.as_slice_mut().expect("contiguous");
        let el = el.as_slice_mut().expect("contiguous");
        for side in 0..2 {
            let b = if side == 0 {
                self.params.boundaries.left
            } else {
                self.params.boundaries.right
            };
            for k in 0..ng {
                // ghost index, mirror index, nearest interior, periodic image
                let (gi, mi, ni, pi) = if side == 0 {
                    (ng - 1 - k, ng + k, ng, ng + n - 1 - k)
                } else {
                    (ng + n + k, ng + n - 1 - k, ng + n - 1, ng + k)
                };
                match b {
                    CrBoundary::Periodic => {
                        ec[gi] = ec[pi];
                        ff[gi] = ff[pi];
                        er[gi] = er[pi];
                        el[gi] = el[pi];
                    }
                    CrBoundary::Reflecting => {
                        ec[gi] = ec[mi];
                        ff[gi] = -ff[mi];
                        let (a, c) = (er[mi], el[mi]);
                        er[gi] = c;
                        el[gi] = a;
                    }
                    CrBoundary::Outflow | CrBoundary::FixedFlux(_) => {
                        ec[gi] = ec[ni];
                        ff[gi] = ff[ni];
                        er[gi] = er[ni];
                        el[gi] = el[ni];
                    }
                    CrBoundary::FixedEnergyDensity(e0) => {
                        ec[gi] = e0;
                        ff[gi] = ff[ni];
                        er[gi] = er[ni];
                        el[gi] = el[ni];
                    }
                }
            }
        }
    }

    /// Storage cell whose gas values stand in for cell `j` (itself for interior cells and
    /// filled gas ghosts; the periodic image or the nearest interior cell otherwise), and
    /// whether the velocity must be mirrored (reflecting side, ghost not filled).
    fn gas_source(&self, gas: &State, j: usize) -> (usize, bool) {
        let (ng, n) = (self.grid.ng, self.grid.n);
        if j >= ng && j < ng + n {
            return (j, false);
        }
        let side = if j < ng {
            self.params.boundaries.left
        } else {
            self.params.boundaries.right
        };
        match side {
            CrBoundary::Periodic => (if j < ng { j + n } else { j - n }, false),
            _ if gas.rho[j] > 0.0 && gas.rho[j].is_finite() => (j, false),
            CrBoundary::Reflecting => (
                if j < ng {
                    2 * ng - 1 - j
                } else {
                    2 * (ng + n) - 1 - j
                },
                true,
            ),
            _ => (if j < ng { ng } else { ng + n - 1 }, false),
        }
    }

    /// Alfvén speeds per storage cell (density is frozen during a call).
    fn fill_alfven(&mut self, gas: &State) {
        for j in 0..self.grid.len() {
            let (src, _) = self.gas_source(gas, j);
            self.scratch.va[j] = match self.params.model {
                TransportModel::FixedKappa { .. } => 0.0,
                _ => self.alfven(gas, src),
            };
        }
    }

    /// Gas velocity and total scattering per storage cell into scratch (after `fill_alfven`).
    fn fill_cell_speeds(&mut self, cr: &CrState, gas: &State) {
        let g = self.grid;
        let (ng, n) = (g.ng, g.n);
        let pos = gas.bx >= 0.0;
        let (er, el) = if pos {
            (&cr.e_plus, &cr.e_minus)
        } else {
            (&cr.e_minus, &cr.e_plus)
        };
        let eb = 0.5 * gas.bx * gas.bx;
        let sh = self.params.alpha_nu * self.params.omega / (self.params.c * self.params.c * eb);
        let (mx, rho) = (
            gas.mx.as_slice().expect("c"),
            gas.rho.as_slice().expect("c"),
        );
        let sv = &mut self.scratch.v;
        for j in ng..ng + n {
            sv[j] = mx[j] / rho[j];
        }
        for j in (0..ng).chain(ng + n..g.len()) {
            let (src, mirror) = self.gas_source(gas, j);
            let v = gas.mx[src] / gas.rho[src];
            self.scratch.v[j] = if mirror { -v } else { v };
        }
        let gc = self.params.gamma_c;
        let s = &mut self.scratch;
        match self.params.model {
            TransportModel::SelfConfined => {
                for ((sg, a), b) in s.sig.iter_mut().zip(er.iter()).zip(el.iter()) {
                    *sg = sh * (a + b);
                }
            }
            TransportModel::FixedKappa { kappa } => s.sig.fill(1.0 / (3.0 * kappa)),
            TransportModel::Streaming {
                kappa,
                kappa_decoupled,
            } => {
                for j in 0..g.len() {
                    let h = gc * cr.e_c[j];
                    s.sig[j] = if cr.f[j].abs() >= s.va[j] * h {
                        1.0 / (3.0 * kappa) + 1.0 / (3.0 * kappa_decoupled)
                    } else {
                        1.0 / (3.0 * kappa_decoupled)
                    };
                }
            }
        }
    }

    /// Computes all face fluxes of the current state into scratch (ghosts must be filled).
    fn compute_fluxes(&mut self, cr: &CrState, gas: &State, ap: bool) {
        self.fill_cell_speeds(cr, gas);
        let g = self.grid;
        let ng = g.ng;
        let nt = g.len();
        let p = &self.params;
        let pos = gas.bx >= 0.0;
        let (er, el) = if pos {
            (&cr.e_plus, &cr.e_minus)
        } else {
            (&cr.e_minus, &cr.e_plus)
        };
        let vars: [&[f64]; 4] = [
            cr.e_c.as_slice().expect("contiguous"),
            cr.f.as_slice().expect("contiguous"),
            er.as_slice().expect("contiguous"),
            el.as_slice().expect("contiguous"),
        ];
        let lim = p.limiter;
        for (q, sl) in vars.iter().zip(self.scratch.slope.iter_mut()) {
            sl[0] = 0.0;
            sl[nt - 1] = 0.0;
            for j in 1..nt - 1 {
                sl[j] = limited_slope(q[j] - q[j - 1], q[j + 1] - q[j], lim);
            }
        }
        let wave = matches!(p.model, TransportModel::SelfConfined);
        let cw = p.c_r / 3f64.sqrt();
        let cr2 = p.c_r * p.c_r;
        let gc = p.gamma_c;
        let dx = g.dx();
        let fixed_left = matches!(p.boundaries.left, CrBoundary::FixedEnergyDensity(_));
        let fixed_right = matches!(p.boundaries.right, CrBoundary::FixedEnergyDensity(_));
        let s = &mut self.scratch;
        let [ref s_ec, ref s_f, ref s_er, ref s_el] = s.slope;
        let [ref mut f_ec, ref mut f_f, ref mut f_er, ref mut f_el] = s.fl;
        for k in 0..=g.n {
            let jl = ng - 1 + k;
            let jr = jl + 1;
            let ecm = vars[0][jl] + 0.5 * s_ec[jl];
            let ecp = vars[0][jr] - 0.5 * s_ec[jr];
            let fm = vars[1][jl] + 0.5 * s_f[jl];
            let fp = vars[1][jr] - 0.5 * s_f[jr];
            let vf = 0.5 * (s.v[jl] + s.v[jr]);
            let up = vf >= 0.0;
            // Dissipation speed of the e_c flux: HLL c_w, reduced in the optically thick limit
            // (asymptotic preserving) but never below the CR transport speed |F|/h at the face.
            // Not reduced on a fixed-energy-density boundary face: there the ghost F is only a
            // copy of the interior one, so a reduced dissipation would let the interior flux
            // alone (≈ 0 while the interior is still empty) set the inflow from the reservoir,
            // and the CR pressure jump at the boundary would persist and heat the first cell;
            // with c_w the face is the plain HLL flux between reservoir and interior (in a
            // steady state with e_c = e_boundary in the first cell the term vanishes).
            let reservoir = (k == 0 && fixed_left) || (k == g.n && fixed_right);
            let ae = if ap && !reservoir {
                let sig = 0.5 * (s.sig[jl] + s.sig[jr]);
                let tau = 3.0 * cw * dx * sig; // = c_w Δx / κ_eff
                let t2 = tau * tau;
                let phi = if t2 < 1e-8 {
                    1.0
                } else if t2 > 40.0 {
                    1.0 / t2
                } else {
                    -(-t2).exp_m1() / t2
                };
                let hs = gc * (ecm + ecp);
                let vst = if hs > 0.0 { (fm + fp).abs() / hs } else { 0.0 };
                (phi * cw).max(vst).min(cw)
            } else {
                cw
            };
            f_ec[k] =
                vf * gc * if up { ecm } else { ecp } + 0.5 * (fm + fp) - 0.5 * ae * (ecp - ecm);
            f_f[k] = vf * if up { fm } else { fp } + 0.5 * cr2 * (gc - 1.0) * (ecm + ecp)
                - 0.5 * cw * (fp - fm);
            if wave {
                let erm = vars[2][jl] + 0.5 * s_er[jl];
                let erp = vars[2][jr] - 0.5 * s_er[jr];
                let elm = vars[3][jl] + 0.5 * s_el[jl];
                let elp = vars[3][jr] - 0.5 * s_el[jr];
                let vaf = 0.5 * (s.va[jl] + s.va[jr]);
                let sr = vf + vaf;
                let sl = vf - vaf;
                let pr = 0.25 * (erm + erp);
                let pl = 0.25 * (elm + elp);
                f_er[k] = sr * if sr >= 0.0 { erm } else { erp } + vf * pr;
                f_el[k] = sl * if sl >= 0.0 { elm } else { elp } + vf * pl;
                s.pr[k] = pr;
                s.pl[k] = pl;
            } else {
                f_er[k] = 0.0;
                f_el[k] = 0.0;
                s.pr[k] = 0.0;
                s.pl[k] = 0.0;
            }
        }
        // Boundary overrides: fixed injected CR energy flux.
        if let CrBoundary::FixedFlux(fin) = p.boundaries.left {
            f_ec[0] = fin;
        }
        if let CrBoundary::FixedFlux(fin) = p.boundaries.right {
            f_ec[g.n] = -fin;
        }
    }

    /// Explicit flux update U += dt L(U) of the interior; returns boundary energy/momentum
    /// inflow and the wave-pressure work.
    fn flux_update(&mut self, cr: &mut CrState, gas: &mut State, dt: f64) -> [f64; 5] {
        let g = self.grid;
        let (ng, n) = (g.ng, g.n);
        let lam = dt / g.dx();
        let cr2 = self.params.c_r * self.params.c_r;
        let pos = gas.bx >= 0.0;
        let CrState {
            e_c,
            f,
            e_plus,
            e_minus,
        } = cr;
        let (er, el) = if pos {
            (e_plus, e_minus)
        } else {
            (e_minus, e_plus)
        };
        let ec = &mut e_c.as_slice_mut().expect("contiguous")[ng..ng + n];
        let ff = &mut f.as_slice_mut().expect("contiguous")[ng..ng + n];
        let er = &mut er.as_slice_mut().expect("contiguous")[ng..ng + n];
        let el = &mut el.as_slice_mut().expect("contiguous")[ng..ng + n];
        let m = &mut gas.mx.as_slice_mut().expect("contiguous")[ng..ng + n];
        let en = &mut gas.en.as_slice_mut().expect("contiguous")[ng..ng + n];
        let rho = &gas.rho.as_slice().expect("contiguous")[ng..ng + n];
        let s = &self.scratch;
        let [ref f_ec, ref f_f, ref f_er, ref f_el] = s.fl;
        let mut wpw = 0.0;
        for i in 0..n {
            ec[i] -= lam * (f_ec[i + 1] - f_ec[i]);
            ff[i] -= lam * (f_f[i + 1] - f_f[i]);
            let dr = s.pr[i + 1] - s.pr[i];
            let dl = s.pl[i + 1] - s.pl[i];
            let v = m[i] / rho[i];
            er[i] -= lam * (f_er[i + 1] - f_er[i]) - lam * v * dr;
            el[i] -= lam * (f_el[i + 1] - f_el[i]) - lam * v * dl;
            m[i] -= lam * (dr + dl);
            let w = lam * v * (dr + dl);
            en[i] -= w;
            wpw -= w;
        }
        let e_left = dt * (f_ec[0] + f_er[0] + f_el[0]);
        let e_right = -dt * (f_ec[n] + f_er[n] + f_el[n]);
        let p_left = dt * (f_f[0] / cr2 + s.pr[0] + s.pl[0]);
        let p_right = -dt * (f_f[n] / cr2 + s.pr[n] + s.pl[n]);
        [e_left, e_right, p_left, p_right, wpw * g.dx()]
    }

    /// Local exchange of every interior cell over `dt`; adds time-weighted transfers to `rep`.
    fn exchange_cells(
        &mut self,
        cr: &mut CrState,
        gas: &mut State,
        damping: &dyn WaveDamping,
        dt: f64,
        weight: f64,
        rep: &mut CrReport,
    ) -> Result<(), CrError> {
        let g = self.grid;
        let p = self.params;
        let pos = gas.bx >= 0.0;
        let (dir_r, dir_l) = if pos {
            (WaveDirection::Forward, WaveDirection::Backward)
        } else {
            (WaveDirection::Backward, WaveDirection::Forward)
        };
        let eb = 0.5 * gas.bx * gas.bx;
        let floor = p.wave_floor * eb;
        let sigma_hat = p.alpha_nu * p.omega / (p.c * p.c * eb);
        if matches!(p.work_form, crate::params::WorkForm::PressureGradient) {
            let dx2 = 2.0 * g.dx();
            let pc = (p.gamma_c - 1.0) / dx2;
            for j in g.interior() {
                self.scratch.grad_pc[j] = pc * (cr.e_c[j + 1] - cr.e_c[j - 1]);
            }
        }
        let dx = g.dx();
        let ratio_hi = p.tolerances.tol_a.exp();
        let ratio_lo = 1.0 / ratio_hi;
        let mut sum = Transfer::default();
        for j in g.interior() {
            let (er, el) = if pos {
                (cr.e_plus[j], cr.e_minus[j])
            } else {
                (cr.e_minus[j], cr.e_plus[j])
            };
            let c0 = Cell {
                ec: cr.e_c[j],
                f: cr.f[j],
                er,
                el,
                m: gas.mx[j],
                en: gas.en[j],
            };
            let ctx = CellCtx {
                rho: gas.rho[j],
                va: self.scratch.va[j],
                cr2: p.c_r * p.c_r,
                sigma_hat,
                gamma_c: p.gamma_c,
                floor,
                grad_pc: self.scratch.grad_pc[j],
                work_form: p.work_form,
                model: p.model,
                ratio_lo,
                ratio_hi,
            };
            let gref: &State = gas;
            let (c1, tr) = exchange_cell(&ctx, c0, dt, &p.tolerances, |e, r| {
                let (a, b) = damping.rates(j, gref, e, if r { dir_r } else { dir_l });
                (a.max(0.0), b.max(0.0))
            })
            .map_err(|st| CrError::ExchangeStalled {
                cell: j - g.ng,
                x: g.x_center(j),
                reason: match st.reason {
                    StallReason::BadEntry => {
                        "the CR energy density entering the exchange is negative or not finite (transport undershoot)".into()
                    }
                    StallReason::SubstepLimit => format!(
                        "the substep limit tolerances.max_substeps = {} was reached",
                        p.tolerances.max_substeps
                    ),
                },
                values: format!(
                    "entered with e_c = {:e}, F = {:e}, e_R = {:e}, e_L = {:e}, gas momentum {:e}, gas energy {:e}; reached e_c = {:e}, F = {:e} after {} substeps covering {:e} of dt = {:e}; v_a = {:e}, c_r = {:e}, rho = {:e} (code units)",
                    st.entry.ec,
                    st.entry.f,
                    st.entry.er,
                    st.entry.el,
                    st.entry.m,
                    st.entry.en,
                    st.reached.ec,
                    st.reached.f,
                    st.substeps,
                    st.done,
                    st.dt,
                    ctx.va,
                    p.c_r,
                    ctx.rho
                ),
            })?;
            if !(c1.ec.is_finite() && c1.f.is_finite() && c1.en.is_finite() && c1.m.is_finite()) {
                return Err(CrError::Unphysical {
                    cell: j - g.ng,
                    x: g.x_center(j),
                    what: format!("non-finite state after exchange: {c1:?}"),
                });
            }
            cr.e_c[j] = c1.ec;
            cr.f[j] = c1.f;
            if pos {
                cr.e_plus[j] = c1.er;
                cr.e_minus[j] = c1.el;
            } else {
                cr.e_minus[j] = c1.er;
                cr.e_plus[j] = c1.el;
            }
            gas.mx[j] = c1.m;
            gas.en[j] = c1.en;
            self.heating[j] += weight * tr.waves_to_heat;
            add_transfer(&mut sum, &tr);
        }
        let mut s2 = sum;
        s2.cr_to_waves *= dx;
        s2.waves_to_heat *= dx;
        s2.work_on_gas *= dx;
        s2.floor *= dx;
        rep.add_transfer(&s2, weight);
        Ok(())
    }

    /// Applies the CR–wave–gas exchange over `dt` (physics-detail §2.6) when
    /// [`Coupling::Split`] is selected; with [`Coupling::InTransport`] (default) the exchange
    /// happens inside [`Self::transport`] and this is a no-op returning an empty report.
    pub fn exchange(
        &mut self,
        cr: &mut CrState,
        gas: &mut State,
        damping: &dyn WaveDamping,
        dt: f64,
    ) -> Result<CrReport, CrError> {
        if self.params.coupling == Coupling::InTransport {
            return Ok(CrReport::default());
        }
        self.exchange_local(cr, gas, damping, dt)
    }

    /// Applies the exchange over `dt` regardless of [`Coupling`] (the local operator itself;
    /// for tests and special drivers).
    pub fn exchange_local(
        &mut self,
        cr: &mut CrState,
        gas: &mut State,
        damping: &dyn WaveDamping,
        dt: f64,
    ) -> Result<CrReport, CrError> {
        check_dt(dt)?;
        self.check(cr, gas)?;
        let mut rep = CrReport::default();
        self.heating.fill(0.0);
        self.apply_boundaries(cr, gas);
        self.fill_alfven(gas);
        self.fill_cell_speeds(cr, gas);
        self.exchange_cells(cr, gas, damping, dt, 1.0, &mut rep)?;
        if dt > 0.0 {
            self.heating.mapv_inplace(|x| x / dt);
        }
        Ok(rep)
    }

    /// Advances CRs (and waves) by `dt` with ⌈dt/Δt_cr⌉ SSP-RK2 subcycles (Shu & Osher 1988);
    /// with [`Coupling::InTransport`] every stage is followed by the implicit local exchange.
    /// Gas density is frozen; gas momentum and energy receive the wave-pressure force/work and
    /// (in-transport coupling) the exchange terms. Gas ghost cells are read, never written.
    pub fn transport(
        &mut self,
        cr: &mut CrState,
        gas: &mut State,
        damping: &dyn WaveDamping,
        dt: f64,
    ) -> Result<CrReport, CrError> {
        check_dt(dt)?;
        self.check(cr, gas)?;
        let mut rep = CrReport::default();
        self.heating.fill(0.0);
        if dt == 0.0 {
            return Ok(rep);
        }
        self.fill_alfven(gas);
        let dtc = self.max_dt_cr(gas);
        let nsub = (dt / dtc).ceil().max(1.0);
        if nsub.is_nan() || nsub > self.params.max_subcycles as f64 {
            return Err(CrError::StepTooLarge {
                dt,
                max_dt: self.max_dt(gas),
            });
        }
        let nsub = nsub as usize;
        let h = dt / nsub as f64;
        let ap = self.params.asymptotic_preserving;
        let inx = self.params.coupling == Coupling::InTransport;
        let r = self.grid.interior();
        for _ in 0..nsub {
            // Save U^n.
            {
                let s = &mut self.scratch.u0;
                s[0][r.clone()].copy_from_slice(&cr.e_c.as_slice().expect("c")[r.clone()]);
                s[1][r.clone()].copy_from_slice(&cr.f.as_slice().expect("c")[r.clone()]);
                s[2][r.clone()].copy_from_slice(&cr.e_plus.as_slice().expect("c")[r.clone()]);
                s[3][r.clone()].copy_from_slice(&cr.e_minus.as_slice().expect("c")[r.clone()]);
                s[4][r.clone()].copy_from_slice(&gas.mx.as_slice().expect("c")[r.clone()]);
                s[5][r.clone()].copy_from_slice(&gas.en.as_slice().expect("c")[r.clone()]);
            }
            for _stage in 0..2 {
                self.apply_boundaries(cr, gas);
                self.compute_fluxes(cr, gas, ap);
                let b = self.flux_update(cr, gas, h);
                rep.energy_in_left += 0.5 * b[0];
                rep.energy_in_right += 0.5 * b[1];
                rep.momentum_in_left += 0.5 * b[2];
                rep.momentum_in_right += 0.5 * b[3];
                rep.wave_pressure_work += 0.5 * b[4];
                if inx {
                    self.exchange_cells(cr, gas, damping, h, 0.5, &mut rep)?;
                }
            }
            // U^{n+1} = (U^n + U^(2))/2.
            {
                let s = &self.scratch.u0;
                let avg = |a: &mut Array1<f64>, b: &Vec<f64>| {
                    let a = a.as_slice_mut().expect("c");
                    for (x, y) in a[r.clone()].iter_mut().zip(&b[r.clone()]) {
                        *x = 0.5 * (*x + *y);
                    }
                };
                avg(&mut cr.e_c, &s[0]);
                avg(&mut cr.f, &s[1]);
                avg(&mut cr.e_plus, &s[2]);
                avg(&mut cr.e_minus, &s[3]);
                avg(&mut gas.mx, &s[4]);
                avg(&mut gas.en, &s[5]);
            }
        }
        rep.subcycles = nsub;
        self.apply_boundaries(cr, gas);
        self.heating.mapv_inplace(|x| x / dt);
        Ok(rep)
    }
}

fn check_dt(dt: f64) -> Result<(), CrError> {
    if !(dt.is_finite() && dt >= 0.0) {
        return Err(CrError::InvalidParameter {
            key: "dt",
            value: dt.to_string(),
            allowed: "a finite number >= 0",
        });
    }
    Ok(())
}

/// Limited slope from the left and right differences.
#[inline]
pub(crate) fn limited_slope(dl: f64, dr: f64, lim: Limiter) -> f64 {
    if dl * dr <= 0.0 {
        return 0.0;
    }
    match lim {
        Limiter::Minmod => {
            if dl.abs() < dr.abs() {
                dl
            } else {
                dr
            }
        }
        Limiter::VanLeer => 2.0 * dl * dr / (dl + dr),
        Limiter::Mc => {
            let c = 0.5 * (dl + dr);
            let m = 2.0 * dl.abs().min(dr.abs());
            c.signum() * c.abs().min(m)
        }
    }
}
