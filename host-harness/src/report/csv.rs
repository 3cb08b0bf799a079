//! CSV waveforms: a header row, then one row per recorded tick (the sampling instant).
//! Numbers are written in Rust's shortest round-trip form; a missing estimate is empty.

use std::io::{self, Write};

use crate::closed_loop::Waveform;

/// The column names, in order.
pub const HEADER: &str = "t_s,current_a,estimate_a,switch_v,output_v,supply_v,drive";
/// The columns a motor run adds after [`HEADER`]: rotor speed and bus voltage.
pub const MOTOR_COLUMNS: &str = "speed_rad_s,bus_v";
/// The column appended when the run has a moving armature (its air gap, m).
pub const ARMATURE_COLUMN: &str = "armature_gap_m";

/// Writes the waveform as CSV to `w`, row by row (nothing is built in memory).
///
/// # Errors
///
/// What `w` reports.
pub fn write_csv(w: &mut impl Write, wave: &Waveform) -> io::Result<()> {
    let motor = !wave.speed_rad_s.is_empty();
    let armature = !wave.armature_gap_m.is_empty();
    let mut header = String::from(HEADER);
    if motor {
        header.push(',');
        header.push_str(MOTOR_COLUMNS);
    }
    if armature {
        header.push(',');
        header.push_str(ARMATURE_COLUMN);
    }
    writeln!(w, "{header}")?;
    let get = |v: &[f64], k: usize| v.get(k).copied().unwrap_or(f64::NAN);
    for k in 0..wave.t_s.len() {
        let cols = [
            get(&wave.t_s, k),
            get(&wave.current_a, k),
            get(&wave.estimate_a, k),
            get(&wave.switch_v, k),
            get(&wave.output_v, k),
            get(&wave.supply_v, k),
            get(&wave.drive, k),
            get(&wave.speed_rad_s, k),
            get(&wave.bus_v, k),
            get(&wave.armature_gap_m, k),
        ];
        // The base columns, then the motor's and the armature's when the run has them.
        let shown = [
            true, true, true, true, true, true, true, motor, motor, armature,
        ];
        for (j, v) in cols
            .iter()
            .zip(shown)
            .filter(|&(_, s)| s)
            .map(|(v, _)| v)
            .enumerate()
        {
            if j > 0 {
                w.write_all(b",")?;
            }
            if v.is_finite() {
                write!(w, "{v}")?;
            }
        }
        w.write_all(b"\n")?;
    }
    Ok(())
}

/// The waveform as CSV text.
#[must_use]
pub fn to_csv(w: &Waveform) -> String {
    let mut v = Vec::with_capacity(64 * (w.t_s.len() + 1));
    // Writing into a `Vec` cannot fail, and every byte written is UTF-8.
    let _ = write_csv(&mut v, w);
    String::from_utf8_lossy(&v).into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_and_missing_values() {
        let w = Waveform {
            t_s: vec![0.0, 1e-4],
            current_a: vec![0.0, 0.25],
            estimate_a: vec![f64::NAN, 0.24],
            switch_v: vec![24.0, 0.1],
            output_v: vec![24.0, 0.1],
            supply_v: vec![24.0, 23.9],
            drive: vec![0.0, 1.0],
            ..Waveform::default()
        };
        let csv = to_csv(&w);
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(lines[0], HEADER);
        assert_eq!(lines[1], "0,0,,24,24,24,0");
        assert_eq!(lines[2], "0.0001,0.25,0.24,0.1,0.1,23.9,1");
        assert_eq!(lines.len(), 3);
        let moving = Waveform {
            armature_gap_m: vec![1.2e-3, 1.1e-3],
            ..w
        };
        let csv = to_csv(&moving);
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(lines[0], format!("{HEADER},{ARMATURE_COLUMN}"));
        assert_eq!(lines[2], "0.0001,0.25,0.24,0.1,0.1,23.9,1,0.0011");
    }

    #[test]
    fn a_motor_run_adds_speed_and_bus() {
        let w = Waveform {
            t_s: vec![0.0],
            current_a: vec![-0.5],
            estimate_a: vec![f64::NAN],
            switch_v: vec![12.0],
            output_v: vec![12.0],
            supply_v: vec![12.0],
            drive: vec![1.0],
            speed_rad_s: vec![-366.5],
            bus_v: vec![12.25],
            ..Waveform::default()
        };
        let csv = to_csv(&w);
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(lines[0], format!("{HEADER},{MOTOR_COLUMNS}"));
        assert_eq!(lines[1], "0,-0.5,,12,12,12,1,-366.5,12.25");
    }
}
