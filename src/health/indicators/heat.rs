//! The heat-load model the heat rise is judged with: what the cooler must carry off at a check's
//! pressure and hall, from the baseline's flow model. Pure arithmetic; it decides no flag.

use super::*;

/// What the cooler must carry off, as far as the readings tell: the model the heat rise is
/// judged with. The oil settles where the cooler and the tank walls carry off the power the
/// unit turns into heat, ΔT = R · P_loss (Newton's law of cooling; R, in K/W, the thermal
/// resistance of cooler and tank), so ΔT / P_loss stays put while only the job and the hall
/// change, and a fouled cooler (R up) or a new leak path (P_loss up) moves it. A
/// fixed-displacement pump delivers about its displacement D whatever the job; of that, the
/// pump's own leakage is all heat and goes as p/ν (laminar gaps, Hagen–Poiseuille, as the
/// flow correction takes it), and what the circuit throttles and loses otherwise goes with the
/// pressure:
///
/// P_loss(p, ν) = p · (q_throttled + q_leak,ref · (ν_ref/ν) · (p/p_ref)),
///
/// with q_leak,ref the leakage at the reference (D less the corrected flow's baseline) and
/// q_throttled = share · D − q_leak,ref (never below 0), `share` being the part of the input
/// power D·p a sound unit turns into heat (`heat_share_pct`, common practice). The leakage is
/// modelled, not taken from the check's own timed flow, whose stopwatch scatter is as large
/// as the leakage itself.
///
/// The oil viscosity in it is the one a sound unit would settle at in this hall at this
/// pressure — ΔT = R · P_loss(p, ν(T_ambient + ΔT)) solved for ΔT, as the oil itself settles —
/// not the one read: a fouled cooler or a relief valve passing oil heats the oil, and the
/// thinner hot oil must not then count as the reason for the heat. Without a flow model, the
/// load goes with the pressure alone.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct HeatLoad {
    /// The working pressure of the reference, Pa.
    pub pressure: f64,
    /// The oil viscosity of the reference, m²/s (`None`: the leakage is not modelled).
    pub viscosity: Option<f64>,
    /// Flow throttled or otherwise lost in the circuit, m³/s (any positive number where the
    /// leakage is not modelled: only ratios of the load are used).
    pub throttled: f64,
    /// The pump's leakage at the reference, m³/s.
    pub leak: f64,
    /// The sound unit's thermal resistance, K per unit of `at`, from the baseline checks.
    pub resistance: Option<f64>,
}

impl HeatLoad {
    /// The load going with the pressure alone, about `pressure`.
    pub fn pressure_only(pressure: f64) -> HeatLoad {
        HeatLoad {
            pressure,
            viscosity: None,
            throttled: 1.0,
            leak: 0.0,
            resistance: None,
        }
    }

    /// The load of a pump of displacement `displacement` leaking `leak` at the reference
    /// conditions `r`, a sound unit turning `share` (0–1) of its input power into heat there.
    pub fn with_leakage(r: Reference, displacement: f64, leak: f64, share: f64) -> HeatLoad {
        let leak = leak.max(0.0);
        HeatLoad {
            pressure: r.pressure,
            viscosity: Some(r.viscosity),
            throttled: (share * displacement - leak).max(0.0),
            leak,
            resistance: None,
        }
    }

    /// The load at working pressure `p` with oil of viscosity `nu` (the reference's where it is
    /// unknown), in m³/s · Pa = W.
    pub fn at(&self, p: f64, nu: Option<f64>) -> Option<f64> {
        if !(p > 0.0 && p.is_finite() && self.pressure > 0.0) {
            return None;
        }
        let thin = match (self.viscosity, nu) {
            (Some(r), Some(n)) if n > 0.0 && n.is_finite() => r / n,
            _ => 1.0,
        };
        let load = p * (self.throttled + self.leak * thin * p / self.pressure);
        (load > 0.0 && load.is_finite()).then_some(load)
    }

    /// The heat rise a sound unit settles at in a hall at `ambient` (K) at pressure `p`, its oil
    /// of viscosity `oil(T)` at T (K): ΔT = R · P(p, ν(ambient + ΔT)), by damped fixed-point
    /// iteration from the reference's oil. `None` without the resistance or where it does not
    /// settle (a thermal runaway the model cannot place).
    pub fn settled_rise(
        &self,
        p: f64,
        ambient: f64,
        oil: impl Fn(f64) -> Option<f64>,
    ) -> Option<f64> {
        let r = self.resistance?;
        let mut dt = r * self.at(p, self.viscosity)?;
        for _ in 0..200 {
            let t = (ambient + dt).min(ambient + SETTLE_MAX_RISE_K);
            let next = r * self.at(p, oil(t))?;
            if (next - dt).abs() < 1e-6 {
                return (next <= SETTLE_MAX_RISE_K).then_some(next);
            }
            dt = 0.5 * (dt + next.min(SETTLE_MAX_RISE_K));
        }
        None
    }

    /// The heat load a sound unit has at a check — pressure `p`, hall at `ambient` (K), the oil
    /// read at `nu_read` — against the reference's: the factor its baseline heat rise is
    /// scaled by there. The oil is taken where a sound unit would settle (`settled_rise`); the
    /// oil as read where that cannot be told (no hall reading, no resistance). Never below the
    /// load at the reference's own oil: how much of the heat the leakage carries rests on the
    /// share of input power taken as heat (common practice, not measured), so thicker oil than
    /// the baseline's — a winter after a baseline formed in summer — is not taken to cool the
    /// unit by the leakage it no longer passes: a heat rise that stays where it was must not
    /// read as a drift. Thinner oil still raises the load, so a summer after a winter baseline
    /// keeps its explanation.
    pub fn ratio(
        &self,
        p: f64,
        ambient: Option<f64>,
        nu_read: Option<f64>,
        oil: impl Fn(f64) -> Option<f64>,
    ) -> Option<f64> {
        let nu = match (self.viscosity, ambient) {
            (Some(_), Some(a)) => self
                .settled_rise(p, a, &oil)
                .and_then(|dt| oil(a + dt))
                .or(nu_read),
            _ => nu_read,
        };
        let here = self.at(p, nu)?.max(self.at(p, self.viscosity)?);
        let there = self.at(self.pressure, self.viscosity)?;
        Some(here / there)
    }
}

/// A settled heat rise beyond this is taken as no settling at all, K (the oil would boil off
/// its additives long before).
const SETTLE_MAX_RISE_K: f64 = 120.0;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn heat_load_without_a_flow_model_goes_with_the_pressure() {
        // ΔT = R · P with P ∝ p (Newton's law of cooling, a fixed pump's flow): at 120 bar
        // against a 100 bar reference the load is 1.2 times, whatever the oil (by hand).
        let m = HeatLoad::pressure_only(100.0e5);
        let k = m
            .ratio(120.0e5, Some(293.15), Some(30e-6), |_| None)
            .unwrap();
        assert!((k - 1.2).abs() < 1e-12, "{k}");
        assert!(m.ratio(0.0, None, None, |_| None).is_none());
    }

    #[test]
    fn heat_load_with_leakage_by_hand() {
        // D = 1, leak 0.05 at the reference (100 bar, 30 cSt), share 0.25: throttled 0.20.
        // At 120 bar and 15 cSt: P = p · (0.20 + 0.05 · (30/15) · 1.2) = p · 0.32, against
        // 100 bar · 0.25 at the reference: 120 · 0.32 / (100 · 0.25) = 1.536 (by hand).
        let r = Reference {
            viscosity: 30e-6,
            pressure: 100.0e5,
        };
        let m = HeatLoad::with_leakage(r, 1.0, 0.05, 0.25);
        assert!((m.throttled - 0.20).abs() < 1e-15);
        let here = m.at(120.0e5, Some(15e-6)).unwrap();
        let there = m.at(100.0e5, Some(30e-6)).unwrap();
        assert!((here / there - 1.536).abs() < 1e-12, "{}", here / there);
        // A leak beyond the share leaves nothing throttled, never less.
        assert_eq!(HeatLoad::with_leakage(r, 1.0, 0.4, 0.25).throttled, 0.0);
    }

    #[test]
    fn a_sound_unit_settles_where_its_heat_balance_closes() {
        // With the oil's thinning set to ν_ref/ν = (T − T_a)/20 K, at the reference pressure
        // the balance ΔT = R · p · (q_t + q_l · ΔT/20) is linear in ΔT:
        // ΔT = R·p·q_t / (1 − R·p·q_l/20) (worked by hand). R·p·q_t = 16 K and R·p·q_l = 4 K
        // give ΔT = 16 / 0.8 = 20 K, where ν = ν_ref: the load ratio is 1.
        let r = Reference {
            viscosity: 30e-6,
            pressure: 100.0e5,
        };
        let m = HeatLoad {
            resistance: Some(16.0 / (100.0e5 * 0.20)),
            ..HeatLoad::with_leakage(r, 1.0, 0.05, 0.25)
        };
        let amb = 293.15;
        let oil = |t: f64| Some(30e-6 * 20.0 / (t - amb).max(1e-9));
        let dt = m.settled_rise(100.0e5, amb, oil).unwrap();
        assert!((dt - 20.0).abs() < 1e-5, "{dt}");
        let k = m.ratio(100.0e5, Some(amb), Some(10e-6), oil).unwrap();
        assert!((k - 1.0).abs() < 1e-6, "{k}");
        // At 120 bar the leakage goes as p too: ΔT = 1.2·16 + 1.2·4·1.2 · ΔT/20, so
        // ΔT = 19.2 / (1 − 0.288) = 26.966 K, and the load ratio is ΔT/20 = 1.3483 (by hand).
        let dt = m.settled_rise(120.0e5, amb, oil).unwrap();
        assert!((dt - 19.2 / 0.712).abs() < 1e-5, "{dt}");
        let k = m.ratio(120.0e5, Some(amb), None, oil).unwrap();
        assert!((k - 19.2 / 0.712 / 20.0).abs() < 1e-6, "{k}");
        // The oil read (10 cSt, as a fouled cooler would leave it) does not enter: the hall
        // and the pressure set the load. Without a hall reading, it does.
        let read = m.ratio(100.0e5, None, Some(10e-6), oil).unwrap();
        assert!((read - (0.20 + 0.05 * 3.0) / 0.25).abs() < 1e-12, "{read}");
        // A balance that cannot close (R·p·q_l ≥ 20 K: each kelvin brings more than a kelvin)
        // has no settled rise.
        let runaway = HeatLoad {
            resistance: Some(16.0 / (100.0e5 * 0.20) * 6.0),
            ..m
        };
        assert!(runaway.settled_rise(100.0e5, amb, oil).is_none());
    }

    #[test]
    fn thicker_oil_than_the_baseline_s_never_lowers_the_load() {
        // The model of the test above, its oil at the reference viscosity in a hall 20 K over
        // ambient. In a cold hall whose oil would settle thick, ν_ref/ν = 0.5 at 100 bar:
        // with the leakage halved the load would be (0.20 + 0.025)/0.25 = 0.9; it is taken at
        // the reference's oil, 1.0 (by hand). At 120 bar the same: (0.20 + 0.05 · 1.2) · 1.2
        // / 0.25 = 1.248.
        let r = Reference {
            viscosity: 30e-6,
            pressure: 100.0e5,
        };
        let m = HeatLoad::with_leakage(r, 1.0, 0.05, 0.25);
        let thick = |_: f64| Some(60e-6);
        let k = m.ratio(100.0e5, None, Some(60e-6), thick).unwrap();
        assert!((k - 1.0).abs() < 1e-12, "{k}");
        let k = m.ratio(120.0e5, None, Some(60e-6), thick).unwrap();
        assert!((k - 1.248).abs() < 1e-12, "{k}");
        // Thinner oil still raises it: 15 cSt at 100 bar, (0.20 + 0.10)/0.25 = 1.2.
        let k = m.ratio(100.0e5, None, Some(15e-6), thick).unwrap();
        assert!((k - 1.2).abs() < 1e-12, "{k}");
    }
}
