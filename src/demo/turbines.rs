//! The demo data: an invented fleet of wind turbines read every eight hours.
//!
//! Each turbine sits at one of three invented sites and has its own offsets
//! (how much it vibrates, how warm it runs, how it tracks the wind), so rows
//! of one turbine are alike and grouping by turbine matters. A fixed share of
//! the turbines has a gearbox fault at some hour; in the 30 days before it,
//! vibration and oil and bearing temperatures creep up, and those rows are
//! labelled `fault_within_30d = yes`. After the fault the turbine is repaired
//! and healthy again. A few sensor drop-outs leave empty cells in
//! `ambient_temp` and `yaw_error`.
//!
//! Invariants: the output depends only on the arguments (see
//! [`super::random`]); rows are in time order, all turbines per reading;
//! floats are written with fixed decimals and never as `-0.0`.

use std::fmt::Write;

use super::random::Draws;

/// The seed of the shipped demo file.
pub const DEMO_SEED: u64 = 7;
/// Turbines in the shipped demo file.
pub const DEMO_TURBINES: usize = 24;
/// Hours covered by the shipped demo file: 150 readings per turbine, 3,600
/// rows in all.
pub const DEMO_HOURS: usize = 1200;
/// Hours between two readings of a turbine.
pub const READING_EVERY_HOURS: usize = 8;
/// How far ahead the target looks: 30 days.
const HORIZON_HOURS: f64 = 720.0;
/// Share of turbines that have a fault (rounded to whole turbines).
const FAULTY_SHARE: f64 = 0.4;

/// The demo file's header.
pub const TURBINE_COLUMNS: [&str; 16] = [
    "turbine",
    "hour",
    "site",
    "vib_axial",
    "vib_radial",
    "vib_tangential",
    "oil_temp",
    "bearing_temp",
    "gen_temp",
    "rotor_rpm",
    "wind_speed",
    "power_kw",
    "pitch_angle",
    "yaw_error",
    "ambient_temp",
    "fault_within_30d",
];

/// An invented site: its name, mean wind speed (m/s) and mean temperature (C).
struct Site {
    name: &'static str,
    wind: f64,
    ambient: f64,
}

const SITES: [Site; 3] = [
    Site {
        name: "kestrel-ridge",
        wind: 8.5,
        ambient: 6.0,
    },
    Site {
        name: "saltmarsh",
        wind: 7.0,
        ambient: 11.0,
    },
    Site {
        name: "hollow-fen",
        wind: 6.0,
        ambient: 14.0,
    },
];

/// Temperature swing by time of day for readings at 00, 08 and 16 o'clock.
const DAILY_SWING: [f64; 3] = [-2.5, 1.0, 3.0];

/// What makes one turbine unlike the others.
struct Turbine {
    id: String,
    site: &'static Site,
    vibration: f64,
    warmth: f64,
    yaw_bias: f64,
    wind_bias: f64,
    fault_hour: Option<f64>,
}

/// The demo CSV: `turbines` turbines read every [`READING_EVERY_HOURS`]
/// hours from hour 0 to before hour `hours`, from `seed`.
pub fn turbines_csv(seed: u64, turbines: usize, hours: usize) -> String {
    let mut draws = Draws::new("holdfast/demo/turbines", seed);
    let fleet = fleet(&mut draws, turbines, hours);
    let mut out = TURBINE_COLUMNS.join(",");
    out.push('\n');
    for hour in (0..hours).step_by(READING_EVERY_HOURS) {
        for turbine in &fleet {
            reading(&mut out, &mut draws, turbine, hour);
        }
    }
    out
}

fn fleet(draws: &mut Draws, turbines: usize, hours: usize) -> Vec<Turbine> {
    let faulty = faulty_set(draws, turbines);
    let width = turbines.to_string().len().max(2);
    (0..turbines)
        .map(|i| Turbine {
            id: format!("T{:0width$}", i + 1),
            site: &SITES[i % SITES.len()],
            vibration: draws.gauss(1.0, 0.15).max(0.5),
            warmth: draws.gauss(0.0, 2.0),
            yaw_bias: draws.gauss(0.0, 2.0),
            wind_bias: draws.gauss(0.0, 0.7),
            // Faults from the middle of the window to a little past its end,
            // so some turbines are still on their way to a fault at the end.
            fault_hour: faulty[i].then(|| hours as f64 * (0.5 + 0.6 * draws.uniform())),
        })
        .collect()
}

/// Which turbines have a fault: a seeded shuffle picks a fixed number.
fn faulty_set(draws: &mut Draws, turbines: usize) -> Vec<bool> {
    let mut order: Vec<usize> = (0..turbines).collect();
    for i in (1..turbines).rev() {
        order.swap(i, draws.below(i as u64 + 1) as usize);
    }
    let count = (turbines as f64 * FAULTY_SHARE).round() as usize;
    let mut faulty = vec![false; turbines];
    for &i in order.iter().take(count) {
        faulty[i] = true;
    }
    faulty
}

/// Wear in [0, 1]: rising as the square of the elapsed share of the 30 days
/// before a fault, zero otherwise; and whether the fault is within 30 days.
fn wear(turbine: &Turbine, hour: f64) -> (f64, bool) {
    match turbine.fault_hour {
        Some(fault) if hour < fault && fault - hour <= HORIZON_HOURS => {
            let elapsed = 1.0 - (fault - hour) / HORIZON_HOURS;
            (elapsed * elapsed, true)
        }
        _ => (0.0, false),
    }
}

/// Append one reading as a CSV line.
fn reading(out: &mut String, draws: &mut Draws, turbine: &Turbine, hour: usize) {
    let (wear, fault_soon) = wear(turbine, hour as f64);
    let site = turbine.site;
    let wind = draws.gauss(site.wind + turbine.wind_bias, 2.2).max(0.5);
    let load = (wind / 12.0).min(1.0);
    let rpm = draws.gauss(16.0 * load, 0.4).max(0.0);
    let power = draws.gauss(2500.0 * load * load * load, 40.0).max(0.0);
    let pitch = draws.gauss(
        if wind > 12.0 {
            2.0 * (wind - 12.0)
        } else {
            0.5
        },
        0.4,
    );
    let yaw = draws.gauss(turbine.yaw_bias, 3.0);
    let swing = DAILY_SWING[(hour % 24) / READING_EVERY_HOURS % DAILY_SWING.len()];
    let ambient = draws.gauss(site.ambient + swing, 1.5);
    let warm = ambient + turbine.warmth;
    let v = turbine.vibration;
    let cells = [
        (
            draws
                .gauss(v * (0.8 + 0.04 * rpm) + 1.2 * wear, 0.2)
                .max(0.01),
            3,
        ),
        (
            draws
                .gauss(v * (1.0 + 0.05 * rpm) + 2.0 * wear, 0.25)
                .max(0.01),
            3,
        ),
        (
            draws
                .gauss(v * (0.6 + 0.03 * rpm) + 0.6 * wear, 0.15)
                .max(0.01),
            3,
        ),
        (
            draws.gauss(warm + 28.0 + power / 250.0 + 9.0 * wear, 1.5),
            1,
        ),
        (draws.gauss(warm + 22.0 + 0.8 * rpm + 5.0 * wear, 1.5), 1),
        (draws.gauss(warm + 35.0 + power / 120.0, 2.0), 1),
        (rpm, 2),
        (wind, 2),
        (power, 1),
        (pitch, 2),
    ];
    let _ = write!(out, "{},{hour},{}", turbine.id, site.name);
    for (value, decimals) in cells {
        out.push(',');
        push_fixed(out, value, decimals);
    }
    // Sensor drop-outs leave a few cells empty.
    for (value, decimals, dropout) in [(yaw, 2, 0.002), (ambient, 1, 0.003)] {
        out.push(',');
        if !draws.chance(dropout) {
            push_fixed(out, value, decimals);
        }
    }
    out.push_str(if fault_soon { ",yes\n" } else { ",no\n" });
}

/// Append `value` rounded to `decimals` decimals (at most 6), never as a
/// negative zero. Rounds `value * 10^decimals` half away from zero and
/// prints the integer: fast, and exact IEEE arithmetic, so portable.
pub(crate) fn push_fixed(out: &mut String, value: f64, decimals: usize) {
    const SCALE: [i64; 7] = [1, 10, 100, 1_000, 10_000, 100_000, 1_000_000];
    let Some(&scale) = SCALE.get(decimals) else {
        let _ = write!(out, "{value:.decimals$}");
        return;
    };
    let scaled = (value * scale as f64).round();
    if scaled.is_nan() || scaled.abs() >= 1e15 {
        // Too large (or not finite) for the integer path; never in our data.
        let _ = write!(out, "{value:.decimals$}");
        return;
    }
    let units = scaled as i64;
    if units < 0 {
        out.push('-');
    }
    let (whole, part) = (units.abs() / scale, units.abs() % scale);
    // Writing to a String cannot fail.
    let _ = write!(out, "{whole}");
    if decimals > 0 {
        let _ = write!(out, ".{part:0decimals$}");
    }
}
