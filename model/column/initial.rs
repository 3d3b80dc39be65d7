//! The initial state of the column: the base state at rest, prescribed
//! charge and imposed hydrometeors in place, and the field they make.

use crate::column::state::{ChargeLedger, InitiationScratch, IonScratch, State, WaterLedger};
use crate::column::transport;
use crate::column::work::{ChargingRates, FlashScratch, MicroScratch, TransportScratch};
use crate::physics::breakdown::{Criterion, CriterionStatus};
use crate::physics::carriers::Carrier;
use crate::physics::discharge::FlashLedger;
use crate::physics::microphysics::species::Species;
use crate::physics::microphysics::Mode;
use crate::setup::experiment::Experiment;

impl State {
    /// The initial state: the base state at rest, prescribed charge in place,
    /// and the field it makes.
    pub fn initial(exp: &Experiment) -> Self {
        let n = exp.grid.len();
        let mut charge = vec![vec![0.0; n]; Carrier::ALL.len()];

        charge[Carrier::Prescribed.index()].copy_from_slice(&exp.prescribed.initial);
        let mut s = State {
            step: 0,
            time: 0.0,
            potential_temperature: exp.base.centre.potential_temperature.clone(),
            q: {
                let mut q: [Vec<f64>; 6] = std::array::from_fn(|_| vec![0.0; n]);
                q[Species::Vapour.index()].copy_from_slice(&exp.base.centre.vapour);
                q
            },
            n_ice: vec![0.0; n],
            w: vec![0.0; n + 1],
            fall_speed: std::array::from_fn(|_| vec![0.0; n]),
            precip_rate: 0.0,
            water: WaterLedger::default(),
            charge_transport: ChargeLedger::default(),
            charging_rates: ChargingRates::new(n),
            charging_cap_hits: 0,
            initial_column_charge: 0.0,
            substeps: (0, 1),
            transport_scratch: TransportScratch::new(n),
            micro_scratch: MicroScratch::new(n),
            charge,
            charge_total: vec![0.0; n],
            potential: vec![0.0; n],
            field: vec![0.0; n + 1],
            column_charge: 0.0,
            field_energy: 0.0,
            criteria_status: [CriterionStatus::default(); Criterion::COUNT],
            ledger: FlashLedger::default(),
            flash_scratch: FlashScratch::new(n),
            n_ion: if exp.ions.enabled {
                [exp.ions.environment.clone(), exp.ions.environment.clone()]
            } else {
                [Vec::new(), Vec::new()]
            },
            conduction_current: vec![0.0; n + 1],
            ion_neutralised: 0.0,
            avalanche: Default::default(),
            initiation_scratch: InitiationScratch {
                corona: vec![0.0; n],
            },
            trigger_since: None,
            trigger_before: None,
            particle_corona: 0.0,
            particle_disruption: 0.0,
            corona_current: 0.0,
            ion_scratch: if exp.ions.enabled {
                IonScratch {
                    flux_pos: vec![0.0; n + 1],
                    flux_neg: vec![0.0; n + 1],
                    attachment: vec![[(0.0, 0.0); 5]; n],
                }
            } else {
                IonScratch::default()
            },
        };
        if exp.microphysics == Mode::Prescribed {
            // Imposed hydrometeors are present from the start.
            crate::column::microphysics::impose(exp, &mut s, 0.0);
        }
        transport::apply_forcing(exp, &mut s);
        transport::update_fall_speeds(exp, &mut s);
        crate::column::electrostatics::solve(exp, &mut s);
        crate::column::breakdown::evaluate(exp, &mut s);
        s.initial_column_charge = s.column_charge;
        s
    }
}
