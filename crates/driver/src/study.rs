//! Streaming versus diffusion of one CR pulse: the library half of `sluice study`.
//!
//! A *variant* is the study deck with its transport keys removed ([`TRANSPORT_KEYS`]) and a
//! list of `key.path=value` overrides applied with the same rules as `sluice run --set`
//! ([`crate::deck::apply_override`]). A [`PulseObserver`] measures the pulse of CR energy
//! after every step ([`measure_pulse`]: second-moment width, half-maximum front, peak, energy,
//! energy-weighted transport speed) and the streaming fraction of the model's quasi-steady
//! flux at every output time; [`power_law_fit`] and [`line_fit`] turn the series into the
//! width exponent α and the front speed. Definitions: docs/streaming-vs-diffusion.md.

use crate::output::OutputWriter;
use crate::simulation::{Observer, Simulation};
use crate::DriverError;

/// Deck keys that select the CR transport. A variant starts from the deck without them, so
/// that any model can be switched on by overrides alone (`[damping]` needs `self_confined`,
/// `kappa` is refused there, the wave energies are refused elsewhere).
pub const TRANSPORT_KEYS: [&str; 6] = [
    "cosmic_rays.model",
    "cosmic_rays.kappa",
    "cosmic_rays.kappa_decoupled",
    "cosmic_rays.init.forward_wave_energy",
    "cosmic_rays.init.backward_wave_energy",
    "damping",
];

/// Removes [`TRANSPORT_KEYS`] from deck text and returns the text of the remaining deck
/// (TOML, comments dropped). Errors: a syntax error (with line/column), or no
/// `[cosmic_rays]` section.
pub fn strip_transport(text: &str) -> Result<String, DriverError> {
    let mut table: toml::Table = text.parse().map_err(|e: toml::de::Error| {
        DriverError::Setup(format!(
            "deck syntax: {}",
            e.message().lines().next().unwrap_or("error")
        ))
    })?;
    if !table.contains_key("cosmic_rays") {
        return Err(DriverError::Setup(
            "the study needs a deck with a [cosmic_rays] section (a CR pulse in [[cosmic_rays.init.profiles]])"
                .into(),
        ));
    }
    fn remove(t: &mut toml::Table, segs: &[&str]) {
        match segs {
            [] => {}
            [last] => {
                t.remove(*last);
            }
            [first, rest @ ..] => {
                if let Some(next) = t.get_mut(*first).and_then(|v| v.as_table_mut()) {
                    remove(next, rest);
                }
            }
        }
    }
    for key in TRANSPORT_KEYS {
        let segs: Vec<&str> = key.split('.').collect();
        remove(&mut table, &segs);
    }
    toml::to_string(&table).map_err(|e| DriverError::Setup(format!("deck text: {e}")))
}

/// One transport variant: a name and its overrides (`key.path=value`).
#[derive(Debug, Clone, PartialEq)]
pub struct Variant {
    /// Name (letters, digits, `-`, `_`, `.`), used in tables and file names.
    pub name: String,
    /// Overrides applied after the transport keys were removed.
    pub overrides: Vec<String>,
}

/// The pulse measured at one instant (cgs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PulseSample {
    /// Time, s.
    pub time: f64,
    /// Second-moment width W = sqrt(∫(x − x̄)² δ dx / ∫δ dx), δ = e_c − e_bg, cm.
    pub width: f64,
    /// Half-maximum front: half the distance between the two points (each found walking
    /// outward from the peak) where δ falls to half its maximum, cm.
    pub front: f64,
    /// Largest e_c, erg/cm³.
    pub peak: f64,
    /// ∫δ dx, erg/cm².
    pub excess_energy: f64,
    /// Energy-weighted transport speed Σ δ |F|/(e_c + P_c) / Σ δ over the pulse cells
    /// (δ ≥ 1% of its maximum), cm/s.
    pub v_eff: f64,
    /// Largest |δ| in the first and last 5% of the cells over the largest δ (the pulse has
    /// reached the boundaries when this is not small).
    pub edge_fraction: f64,
}

/// Measures the CR pulse of `sim` (which must have the `cr` stage) over the background
/// energy density `background` (erg/cm³). `None` without a CR stage or without a pulse
/// (δ ≤ 0 everywhere).
pub fn measure_pulse(sim: &Simulation, background: f64) -> Option<PulseSample> {
    let stage = sim.stages().iter().find(|s| s.name() == "cr")?;
    let ec = stage.cell_array("e_c")?;
    let fl = stage.cell_array("f")?;
    let u = sim.units();
    let g = sim.state().grid;
    let r = g.interior();
    let pu = u.pressure();
    let fu = pu * u.velocity;
    let dx = g.dx() * u.length;
    let gamma_c = sim
        .deck()
        .cosmic_rays
        .as_ref()
        .map_or(4.0 / 3.0, |c| c.adiabatic_index);
    let n = r.len();
    let x = |k: usize| g.x_center(r.start + k) * u.length;
    let e = |k: usize| ec[r.start + k] * pu;
    let delta = |k: usize| e(k) - background;
    let (mut m0, mut m1) = (0.0, 0.0);
    let (mut kmax, mut dmax) = (0, f64::NEG_INFINITY);
    for k in 0..n {
        let d = delta(k);
        m0 += d * dx;
        m1 += x(k) * d * dx;
        if d > dmax {
            dmax = d;
            kmax = k;
        }
    }
    if !(m0 > 0.0 && dmax > 0.0) {
        return None;
    }
    let mean = m1 / m0;
    let m2: f64 = (0..n).map(|k| (x(k) - mean).powi(2) * delta(k) * dx).sum();
    let half = 0.5 * dmax;
    let cross = |step: isize| -> f64 {
        let mut k = kmax as isize;
        loop {
            let next = k + step;
            if next < 0 || next >= n as isize {
                return x(k as usize);
            }
            let (dk, dn) = (delta(k as usize), delta(next as usize));
            if dn < half {
                let w = (dk - half) / (dk - dn);
                return x(k as usize) + w * (x(next as usize) - x(k as usize));
            }
            k = next;
        }
    };
    let front = 0.5 * (cross(1) - cross(-1));
    let (mut wsum, mut vsum) = (0.0, 0.0);
    for k in 0..n {
        let d = delta(k);
        let h = gamma_c * e(k);
        if d >= 0.01 * dmax && h > 0.0 {
            wsum += d;
            vsum += d * (fl[r.start + k] * fu).abs() / h;
        }
    }
    let edge = (n / 20).max(1);
    let edge_max = (0..edge)
        .chain(n - edge..n)
        .map(|k| delta(k).abs())
        .fold(0.0, f64::max);
    Some(PulseSample {
        time: sim.time_seconds(),
        width: (m2 / m0).max(0.0).sqrt(),
        front,
        peak: dmax + background,
        excess_energy: m0,
        v_eff: if wsum > 0.0 { vsum / wsum } else { 0.0 },
        edge_fraction: edge_max / dmax,
    })
}

/// Flux-weighted streaming fraction of the pulse cells (δ ≥ 1% of its maximum):
/// Σ|F_st| / Σ(|F_st| + |F_diff|) from the snapshot fields `cr_streaming_flux` and
/// `cr_diffusive_flux` (docs/output-format.md). NaN when the pulse has no quasi-steady flux.
pub fn pulse_streaming_fraction(sim: &Simulation, background: f64) -> f64 {
    let Some(stage) = sim.stages().iter().find(|s| s.name() == "cr") else {
        return f64::NAN;
    };
    let fields = stage.fields(sim.state());
    let get = |name: &str| fields.iter().find(|f| f.name == name).map(|f| &f.data);
    let (Some(e), Some(fs), Some(fd)) = (
        get("cr_energy_density"),
        get("cr_streaming_flux"),
        get("cr_diffusive_flux"),
    ) else {
        return f64::NAN;
    };
    let dmax = e.iter().map(|v| v - background).fold(0.0, f64::max);
    let (mut num, mut den) = (0.0, 0.0);
    for ((ei, a), b) in e.iter().zip(fs).zip(fd) {
        if ei - background >= 0.01 * dmax && dmax > 0.0 {
            num += a.abs();
            den += a.abs() + b.abs();
        }
    }
    if den > 0.0 {
        num / den
    } else {
        f64::NAN
    }
}

/// Linear damping of a self-confined deck whose only damping is the constant rate:
/// `(Γ_0 in s⁻¹, f_E)` with the wave energy loss Q = f_E Γ_0 e_±. `None` for other models
/// or when ion–neutral, nonlinear Landau or turbulent damping is on (the drift relation of
/// [`flank_drift`] is then not the one of linear constant damping).
pub fn constant_damping(sim: &Simulation) -> Option<(f64, f64)> {
    let deck = sim.deck();
    let cr = deck.cosmic_rays.as_ref()?;
    if cr.model != crate::physics::sections::CrModelChoice::SelfConfined {
        return None;
    }
    let d = deck.damping.as_ref()?;
    if d.ion_neutral.is_some() || d.nonlinear_landau.is_some() || d.turbulent.is_some() {
        return None;
    }
    Some((d.constant_rate, d.energy_factor))
}

/// Drift speed of the pulse flanks at one instant against the growth = damping balance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FlankDrift {
    /// Time, s.
    pub time: f64,
    /// Number of flank cells: interior cells with 0.2 ≤ δ/δ_max ≤ 0.8 and a centred CR
    /// energy gradient of at least 10% of the largest one (δ = e_c − e_bg); for the
    /// self-confined model also confined, max(e_+, e_−) ≥ 100 × the wave floor (cells whose
    /// waves sit at the floor are decoupled and outside the growth = damping balance).
    pub cells: usize,
    /// Median over the flank cells of v_st/v_a, v_st = |F|/h (h = γ_c e_c) and v_a the
    /// local Alfvén speed of the model (`alfven_speed` snapshot field).
    pub v_st_over_v_a: f64,
    /// Median over the flank cells of v_st / (v_a + f_E Γ_0 c² e_B/(α_ν Ω v_a h)), the
    /// streaming speed of growth = linear damping (physics-detail §4.1; Wiener, Zweibel &
    /// Oh 2013, ApJ 767, 87). NaN unless [`constant_damping`] applies.
    pub wzo_ratio: f64,
    /// Largest |F|/(c_r e_c) over the flank cells: how close the flanks are to the
    /// free-streaming bound of the two-moment model (|F| ≤ c_r e_c). Near 1 the drift is set
    /// by the reduced speed of light c_r, not by the waves.
    pub free_streaming: f64,
}

/// Median of the values (sorted in place); NaN for an empty slice.
pub fn median(v: &mut [f64]) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

/// Measures the drift of the pulse flanks of `sim` over the background `background`
/// (erg/cm³); see [`FlankDrift`]. Reads the snapshot fields of the CR stage (allocates: call
/// it at output times). `None` without a CR stage, a pulse or flank cells.
pub fn flank_drift(sim: &Simulation, background: f64) -> Option<FlankDrift> {
    let stage = sim.stages().iter().find(|s| s.name() == "cr")?;
    let fields = stage.fields(sim.state());
    let get = |name: &str| fields.iter().find(|f| f.name == name).map(|f| &f.data);
    let (e, flux, va) = (
        get("cr_energy_density")?,
        get("cr_flux")?,
        get("alfven_speed")?,
    );
    let n = e.len();
    if n < 3 {
        return None;
    }
    let cr = sim.deck().cosmic_rays.as_ref()?;
    let gamma_c = cr.adiabatic_index;
    let dmax = e.iter().map(|v| v - background).fold(0.0, f64::max);
    if dmax <= 0.0 {
        return None;
    }
    let waves = match (get("forward_wave_energy"), get("backward_wave_energy")) {
        (Some(p), Some(m)) if cr.model == crate::physics::sections::CrModelChoice::SelfConfined => {
            Some((p, m))
        }
        _ => None,
    };
    let grad = |k: usize| (e[k + 1] - e[k - 1]).abs();
    let gmax = (1..n - 1).map(grad).fold(0.0, f64::max);
    let damping = constant_damping(sim);
    let coef = drift_coefficient(sim)?;
    let e_b = sim.deck().magnetic_field.x.powi(2) / (8.0 * std::f64::consts::PI);
    let c_r = stage
        .checkpoint()
        .iter()
        .find(|f| f.name == "c_r")
        .and_then(|f| f.data.first().copied())
        .map_or(f64::NAN, |v| v * sim.units().velocity);
    let mut speeds = Vec::new();
    let mut ratios = Vec::new();
    let mut free: f64 = 0.0;
    for k in 1..n - 1 {
        let d = (e[k] - background) / dmax;
        if !(0.2..=0.8).contains(&d) || grad(k) < 0.1 * gmax || va[k] <= 0.0 {
            continue;
        }
        if let Some((p, m)) = waves {
            if p[k].max(m[k]) < 100.0 * cr.wave_floor * e_b {
                continue;
            }
        }
        let h = gamma_c * e[k];
        let v_st = flux[k].abs() / h;
        speeds.push(v_st / va[k]);
        free = free.max(flux[k].abs() / (c_r * e[k]));
        if let Some((rate, f_e)) = damping {
            let excess = f_e * rate * coef / (va[k] * h);
            ratios.push(v_st / (va[k] + excess));
        }
    }
    if speeds.is_empty() {
        return None;
    }
    Some(FlankDrift {
        time: sim.time_seconds(),
        cells: speeds.len(),
        v_st_over_v_a: median(&mut speeds),
        wzo_ratio: median(&mut ratios),
        free_streaming: free,
    })
}

/// Observer of one study run: a [`PulseSample`] after every step (and at t = 0), the pulse
/// streaming fraction and the [`FlankDrift`] at every output time, and optionally the snapshots and ledger of an
/// [`OutputWriter`].
pub struct PulseObserver {
    background: f64,
    /// Samples in time order.
    pub samples: Vec<PulseSample>,
    /// (time in s, pulse streaming fraction) at every output time.
    pub fractions: Vec<(f64, f64)>,
    /// Flank drift at every output time that has flank cells.
    pub drifts: Vec<FlankDrift>,
    writer: Option<OutputWriter>,
}

impl PulseObserver {
    /// An observer for a pulse over the background `background` (erg/cm³), writing
    /// snapshots through `writer` if given.
    pub fn new(background: f64, writer: Option<OutputWriter>) -> Self {
        Self {
            background,
            samples: Vec::new(),
            fractions: Vec::new(),
            drifts: Vec::new(),
            writer,
        }
    }

    /// The snapshot writer, if any.
    pub fn writer(&self) -> Option<&OutputWriter> {
        self.writer.as_ref()
    }

    fn record(&mut self, sim: &Simulation) {
        if let Some(s) = measure_pulse(sim, self.background) {
            if self.samples.last().is_none_or(|l| l.time < s.time) {
                self.samples.push(s);
            }
        }
    }
}

impl Observer for PulseObserver {
    fn output(&mut self, sim: &Simulation, index: usize) -> Result<(), DriverError> {
        self.record(sim);
        self.fractions.push((
            sim.time_seconds(),
            pulse_streaming_fraction(sim, self.background),
        ));
        if let Some(d) = flank_drift(sim, self.background) {
            self.drifts.push(d);
        }
        if let Some(w) = self.writer.as_mut() {
            w.output(sim, index)?;
        }
        Ok(())
    }

    fn after_step(&mut self, sim: &Simulation) {
        self.record(sim);
    }
}

/// Least-squares straight line y = a + b x; returns (a, b). `None` with fewer than 2 points
/// or all x equal.
pub fn line_fit(x: &[f64], y: &[f64]) -> Option<(f64, f64)> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    let mx = x[..n].iter().sum::<f64>() / n as f64;
    let my = y[..n].iter().sum::<f64>() / n as f64;
    let (mut sxx, mut sxy) = (0.0, 0.0);
    for (a, b) in x[..n].iter().zip(&y[..n]) {
        sxx += (a - mx) * (a - mx);
        sxy += (a - mx) * (b - my);
    }
    if sxx <= 0.0 {
        return None;
    }
    let b = sxy / sxx;
    Some((my - b * mx, b))
}

/// Exponent of y ∝ t^α by least squares in log-log over the points with t > 0 and y > 0;
/// returns (α, points used). `None` with fewer than 3 such points.
pub fn power_law_fit(t: &[f64], y: &[f64]) -> Option<(f64, usize)> {
    let (lx, ly): (Vec<f64>, Vec<f64>) = t
        .iter()
        .zip(y)
        .filter(|(a, b)| **a > 0.0 && **b > 0.0 && a.is_finite() && b.is_finite())
        .map(|(a, b)| (a.ln(), b.ln()))
        .unzip();
    if lx.len() < 3 {
        return None;
    }
    line_fit(&lx, &ly).map(|(_, b)| (b, lx.len()))
}

/// Fitted numbers of one run over the window t ∈ [lo, hi] (s).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PulseFit {
    /// Width exponent α: sqrt(W² − W(0)²) ∝ t^α (1/2 for diffusion at every time).
    pub alpha_width: Option<f64>,
    /// Front exponent: x_front − x_front(0) ∝ t^α (1 for streaming at every time).
    pub alpha_front: Option<f64>,
    /// Front speed d x_front/dt (least-squares line), cm/s.
    pub front_speed: Option<f64>,
    /// Mean of the energy-weighted transport speed over the window, cm/s.
    pub v_eff: f64,
    /// Samples in the window.
    pub points: usize,
}

/// Fits the samples inside t ∈ [lo, hi] (s); the reference W(0), x_front(0) is the first
/// sample (t = 0).
pub fn fit_pulse(samples: &[PulseSample], lo: f64, hi: f64) -> PulseFit {
    let Some(first) = samples.first() else {
        return PulseFit {
            alpha_width: None,
            alpha_front: None,
            front_speed: None,
            v_eff: f64::NAN,
            points: 0,
        };
    };
    let win: Vec<&PulseSample> = samples
        .iter()
        .filter(|s| s.time >= lo && s.time <= hi && s.time > 0.0)
        .collect();
    let t: Vec<f64> = win.iter().map(|s| s.time).collect();
    let spread: Vec<f64> = win
        .iter()
        .map(|s| (s.width * s.width - first.width * first.width).sqrt())
        .collect();
    let disp: Vec<f64> = win.iter().map(|s| s.front - first.front).collect();
    let fronts: Vec<f64> = win.iter().map(|s| s.front).collect();
    let v_eff = if win.is_empty() {
        f64::NAN
    } else {
        win.iter().map(|s| s.v_eff).sum::<f64>() / win.len() as f64
    };
    PulseFit {
        alpha_width: power_law_fit(&t, &spread).map(|a| a.0),
        alpha_front: power_law_fit(&t, &disp).map(|a| a.0),
        front_speed: line_fit(&t, &fronts).map(|l| l.1),
        v_eff,
        points: win.len(),
    }
}

/// Alfvén speed |B_x|/sqrt(4π ρ̄) of the total density averaged over the interior, cm/s.
pub fn mean_alfven_speed(sim: &Simulation) -> f64 {
    let st = sim.state();
    let r = st.grid.interior();
    let n = r.len() as f64;
    let rho = r.map(|j| st.rho[j]).sum::<f64>() / n;
    st.bx.abs() / rho.sqrt() * sim.units().velocity
}

/// Constant wave damping rate Γ* (s⁻¹) at which the drift excess of linear damping,
/// v_st − v_a = 2Γ c² e_B/(α_ν Ω v_a h) (physics-detail §4.1; Wiener, Zweibel & Oh 2013, ApJ
/// 767, 87), equals v_a at the enthalpy `h` (erg/cm³): Γ* = α_ν Ω v_a² h/(2 c² e_B).
/// `v_a` in cm/s; Ω and α_ν from the deck's `[cosmic_rays]` (1 GeV/c proton by default).
pub fn reference_damping_rate(sim: &Simulation, v_a: f64, h: f64) -> Option<f64> {
    Some(v_a * v_a * h / (2.0 * drift_coefficient(sim)?))
}

/// c² e_B/(α_ν Ω) of the deck (erg cm⁻¹ s⁻¹, so that f_E Γ c² e_B/(α_ν Ω v_a h) is a speed): the scale of the linear-damping drift excess (physics-detail §4.1). Ω and α_ν
/// from `[cosmic_rays]`, e_B = B_x²/(8π). `None` without `[cosmic_rays]`.
fn drift_coefficient(sim: &Simulation) -> Option<f64> {
    let sec = sim.deck().cosmic_rays.as_ref()?;
    let b = sim.deck().magnetic_field.x.abs();
    let omega = sluice_damping::CharacteristicCr {
        momentum_gev: sec.cr_momentum,
    }
    .gyro_frequency(b);
    let c = sluice_damping::constants::C_LIGHT;
    let e_b = b * b / (8.0 * std::f64::consts::PI);
    Some(c * c * e_b / (sec.scattering_prefactor * omega))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fits_recover_exact_power_laws_and_lines() {
        let t: Vec<f64> = (1..20).map(|k| k as f64 * 0.3).collect();
        let y: Vec<f64> = t.iter().map(|t| 2.5 * t.powf(0.5)).collect();
        let (a, n) = power_law_fit(&t, &y).unwrap();
        assert!((a - 0.5).abs() < 1e-12, "{a}");
        assert_eq!(n, 19);
        let z: Vec<f64> = t.iter().map(|t| 3.0 - 1.5 * t).collect();
        let (a0, b) = line_fit(&t, &z).unwrap();
        assert!((a0 - 3.0).abs() < 1e-12 && (b + 1.5).abs() < 1e-12);
        assert!(power_law_fit(&t[..2], &y[..2]).is_none());
        assert!(line_fit(&[1.0, 1.0], &[0.0, 2.0]).is_none());
    }

    #[test]
    fn strip_removes_transport_keys_only() {
        let text = "[run]\nname = \"a\"\n[cosmic_rays]\nmodel = \"streaming\"\nkappa = 1.0\nauto_factor = 10.0\n[cosmic_rays.init]\nenergy_density = 1.0\nforward_wave_energy = 1e-6\n[damping]\nconstant_rate = 1.0\n";
        let s = strip_transport(text).unwrap();
        let t: toml::Table = s.parse().unwrap();
        let cr = t["cosmic_rays"].as_table().unwrap();
        assert!(!cr.contains_key("model") && !cr.contains_key("kappa"));
        assert!(cr.contains_key("auto_factor"));
        assert!(!cr["init"]
            .as_table()
            .unwrap()
            .contains_key("forward_wave_energy"));
        assert!(!t.contains_key("damping"));
        assert!(strip_transport("[run]\nname = \"a\"\n").is_err());
    }
}
