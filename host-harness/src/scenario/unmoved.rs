//! A coil file without its moving armature: for a controller that cannot watch the motion
//! (a firmware image whose tick reports no seating, a C API driver that plans no movement
//! detector), the same system with a coil that does not move.

use super::{Action, FaultSpec, File};

impl File {
    /// This file with nothing moving: `[system.coil.armature]`, the armature tolerances, the
    /// checks that need an armature (`Property::needs_armature`) and the armature faults
    /// removed. Everything else is unchanged; the coil is its `inductance`.
    ///
    /// Positions in later errors still refer to the original file, whose check and event
    /// numbers may then differ.
    #[must_use]
    pub fn without_armature(mut self) -> File {
        if let Some(c) = &mut self.system.coil {
            c.armature = None;
        }
        let t = &mut self.tolerances;
        (t.open_gap, t.spring, t.armature_load) = (None, None, None);
        for sc in &mut self.scenarios {
            sc.checks.retain(|c| !c.property.needs_armature());
            sc.events.retain(|e| {
                !matches!(
                    e.action,
                    Action::Fault(
                        FaultSpec::StuckArmature
                            | FaultSpec::SluggishArmature(_)
                            | FaultSpec::ExcessLoad(_)
                    )
                )
            });
        }
        self
    }
}

#[cfg(test)]
mod tests {
    const VALVE: &str = include_str!("../../scenarios/valve.toml");

    #[test]
    fn the_valve_without_its_plunger_keeps_everything_else() {
        let f = super::super::parse("valve.toml", VALVE).unwrap();
        let checks = |f: &super::File| f.scenarios.iter().map(|s| s.checks.len()).sum::<usize>();
        let moving = f
            .scenarios
            .iter()
            .flat_map(|s| &s.checks)
            .filter(|c| c.property.needs_armature())
            .count();
        assert!(moving > 0 && f.system.coil.unwrap().armature.is_some());
        let n = checks(&f);
        let g = f.clone().without_armature();
        assert!(g.system.coil.unwrap().armature.is_none());
        assert_eq!(checks(&g), n - moving);
        assert_eq!(g.scenarios.len(), f.scenarios.len());
        // It runs, and its scenarios hold with the coil that does not move.
        for k in 0..g.scenarios.len() {
            let r = super::super::run::run(
                &g,
                k,
                &super::super::run::Params::NOMINAL,
                super::super::run::Record::None,
            )
            .unwrap();
            assert!(r.passed(), "{}: {:?}", g.scenarios[k].name, r.violations());
        }
    }
}
