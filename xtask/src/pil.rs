//! The firmware-in-the-loop checks of `cargo xtask test`, after the C API's:
//!
//! 1. the format of the target-only crate `pil/images`; the example image `coil-driver` (`pil/images`) built for Cortex-M0 and Cortex-M4F, and
//!    checked against each core (the hard-float M4F image must be refused for the M0);
//! 2. every scenario of `host-harness/scenarios/valve.toml` run with each image in the loop
//!    (nominal parts), with the tick budget at the clock stated per core in [`CORES`]; the
//!    plunger of the file is left out (`File::without_armature`): the images' wire reports no
//!    seating, and the C API's coil driver plans no movement detector;
//! 3. each run's actuations compared tick for tick with a host run of the same driver
//!    (`lenz::drive::CoilDriver` compiled for the host, the same configuration and PWM
//!    resolution) on the same scenario: the sequences must be identical;
//! 4. every property holds; the instructions per tick per core and the ticks per wall-clock
//!    second in the loop are printed;
//! 5. the C image `pil/images/c/coil_driver.c` (the coil driver through the C API, linked with
//!    `liblenz_ffi.a` built with the runtime) on Cortex-M3, checked as in 2 to 4;
//! 6. the test image `misbehave` on Cortex-M0: an endless loop (stopped by the instruction
//!    limit), a hard fault, an early exit, a panic, an endless loop with interrupts off
//!    (stopped by the wall-clock guard) and a malformed answer, each at a given tick, must fail
//!    `firmware_ran` naming that tick and the way; a parameter block the image refuses and a
//!    file that is not an image must be errors.

use std::convert::Infallible;
use std::time::Instant;

use embedded_hal::pwm::{ErrorType, SetDutyCycle};
use lenz::drive::{CoilDriver, CoilDriverConfig, CoilSense};
use lenz_harness::closed_loop::{Actuation, Controller, Sensed, Telemetry};
use lenz_harness::firmware::CCompiler;
use lenz_harness::firmware::{Target, Toolchain, workspace_root};
use lenz_harness::pil::build::{COIL_DRIVER, build_ffi_runtime, build_image};
use lenz_harness::pil::controller::actuation;
use lenz_harness::pil::params::{PWM_MAX_DUTY, coil_driver_config};
use lenz_harness::pil::{FirmwareRun, Guards, Misbehaviour, TickBudget, run_scenario, session};
use lenz_harness::scenario::{
    self,
    run::{Params, Record, RunSetupError, run_with},
};
use lenz_pil::wire;

/// The cores the Rust image runs on, with the clock its tick budget is checked at (MHz):
/// common clocks of such parts (a Cortex-M0 at 48 MHz, a Cortex-M4F at 80 MHz), invented for
/// the demo; the emulated machine's own clock does not change the instruction counts.
const CORES: [(Target, f64); 2] = [(Target::M0, 48.0), (Target::M4f, 80.0)];
/// The core of the C image and its clock (a Cortex-M3 at 72 MHz, invented for the demo).
const C_CORE: (Target, f64) = (Target::M3, 72.0);
/// Share of the tick the tick function may take (common practice, no source).
const TICK_FRACTION: f64 = 0.5;

fn timed<T>(name: &str, f: impl FnOnce() -> Result<T, String>) -> Result<T, String> {
    let t = Instant::now();
    let r = f().map_err(|e| format!("{name}: {e}"))?;
    println!("xtask: {name}: ok ({:.1} s)", t.elapsed().as_secs_f64());
    Ok(r)
}

/// A PWM channel of the images' resolution that keeps the duty written last.
struct Pwm(u16);

impl ErrorType for Pwm {
    type Error = Infallible;
}

impl SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        PWM_MAX_DUTY
    }
    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.0 = duty;
        Ok(())
    }
}

/// The host run: the same driver and tick as the image's `tick` (pil/images/src/bin/
/// coil_driver.rs), recording every actuation.
struct HostCoil {
    driver: CoilDriver<CoilDriverConfig, Pwm>,
    actuations: Vec<wire::Actuation>,
    telemetry: Telemetry,
}

impl Controller for HostCoil {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let _ = self.driver.update(
            s.demand,
            CoilSense {
                current_counts: s.current_counts,
                supply_counts: s.supply_counts,
            },
        );
        let a = wire::Actuation {
            duty: self.driver.output().0,
            duty_full_scale: PWM_MAX_DUTY,
            estimate_ua: Some(self.driver.estimate_ua()),
            tripped: self.driver.fault().is_some(),
            reverse: false,
        };
        self.actuations.push(a);
        self.telemetry = Telemetry {
            estimate_a: a.estimate_ua.map(|ua| f64::from(ua) * 1e-6),
            tripped: a.tripped,
            trip_cause: None,
            ..Telemetry::default()
        };
        actuation(&a).unwrap_or(Actuation::OFF)
    }

    fn telemetry(&self) -> Telemetry {
        self.telemetry
    }
}

/// Runs every check; `Err` names what failed.
pub fn checks() -> Result<(), String> {
    timed("format of pil/images", || {
        let manifest = workspace_root()
            .join("pil")
            .join("images")
            .join("Cargo.toml");
        let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".to_string());
        let status = std::process::Command::new(cargo)
            .args(["fmt", "--check", "--manifest-path"])
            .arg(manifest)
            .status()
            .map_err(|e| format!("could not start cargo fmt: {e}"))?;
        if status.success() {
            Ok(())
        } else {
            Err(format!(
                "not formatted ({status}); run cargo fmt in pil/images"
            ))
        }
    })?;
    let all: Vec<Target> = CORES.iter().map(|c| c.0).collect();
    let tc = Toolchain::detect(&all).map_err(|m| m.to_string())?;
    let qemu = session::qemu()?;
    let path = workspace_root()
        .join("host-harness")
        .join("scenarios")
        .join("valve.toml");
    // The images' tick reports no armature seating and the C API plans no movement
    // detector: they run the valve's scenarios with its coil not moving (the host runs the
    // plunger with the detector-driven driver, `lenz sim`).
    let file = scenario::load(&path)
        .map_err(|e| e.to_string())?
        .without_armature();
    let mut images = Vec::new();
    for (t, mhz) in CORES {
        let image = timed(
            &format!("build the coil driver image for {}", t.core()),
            || build_image(&tc, t, COIL_DRIVER),
        )?;
        images.push((t, mhz, image, "Rust"));
    }
    let cc = CCompiler::detect().map_err(|m| m.to_string())?;
    let c_image = timed(
        &format!("build the C coil driver image for {}", C_CORE.0.core()),
        || build_c_image(&tc, &cc, C_CORE.0),
    )?;
    // The hard-float image must be refused for a core without an FPU, before it runs.
    let refused = lenz_harness::pil::elf::check(&images[1].2, Target::M0);
    match refused {
        Err(e) if e.contains("floating-point") => {
            println!("xtask:   the Cortex-M4F image is refused for m0: {e}");
        }
        other => {
            return Err(format!(
                "the Cortex-M4F image was not refused for m0: {other:?}"
            ));
        }
    }
    let mut table = Vec::new();
    let (mut ticks, mut wall) = (0u64, 0.0f64);
    images.push((C_CORE.0, C_CORE.1, c_image, "C"));
    for (t, mhz, image, language) in &images {
        let fw = FirmwareRun {
            qemu: qemu.clone(),
            target: *t,
            image: image.clone(),
            guards: Guards::default(),
            budget: Some(TickBudget::Clock {
                mhz: *mhz,
                fraction: TICK_FRACTION,
            }),
            record_actuations: true,
            params: None,
        };
        timed(
            &format!(
                "{language} coil driver in the loop on {} ({})",
                t.core(),
                t.machine()
            ),
            || {
                let mut problems = Vec::new();
                for (k, sc) in file.scenarios.iter().enumerate() {
                    let start = Instant::now();
                    let o = run_scenario(&file, k, &Params::NOMINAL, Record::None, &fw)
                        .map_err(|e| e.to_string())?;
                    wall += start.elapsed().as_secs_f64();
                    ticks += o.result.ticks;
                    for p in o.result.violations() {
                        problems.push(format!(
                            "'{}': {} = {} (limit {})",
                            sc.name, p.name, p.value, p.limit
                        ));
                    }
                    if let Some(f) = &o.failure {
                        problems.push(format!("'{}': {f}", sc.name));
                    }
                    let (_, host) = run_with(&file, k, &Params::NOMINAL, Record::None, |temp| {
                        let cfg = coil_driver_config(&file, temp)?;
                        let driver = CoilDriver::new(cfg, Pwm(0))
                            .map_err(|_| RunSetupError("the host driver refused the PWM".into()))?;
                        Ok(HostCoil {
                            driver,
                            actuations: Vec::new(),
                            telemetry: Telemetry::default(),
                        })
                    })
                    .map_err(|e| e.to_string())?;
                    if o.actuations.len() != host.actuations.len() {
                        problems.push(format!(
                            "'{}': {} actuations in the loop, {} on the host",
                            sc.name,
                            o.actuations.len(),
                            host.actuations.len()
                        ));
                    } else if let Some(i) =
                        (0..host.actuations.len()).find(|&i| o.actuations[i] != host.actuations[i])
                    {
                        problems.push(format!(
                            "'{}': tick {i}: image {:?}, host {:?}",
                            sc.name, o.actuations[i], host.actuations[i]
                        ));
                    }
                    table.push(format!(
                        "xtask:   {language:<4} {:<11} {:<28} {:>5} ticks, max {:>4} instructions in tick {:>5} \
                         (limit {} at {mhz} MHz), mean {:.1}; {} actuations identical to the host run",
                        t.core(),
                        sc.name,
                        o.costs.ticks,
                        o.costs.max,
                        o.costs.max_tick,
                        o.result
                            .property("tick_budget")
                            .map_or(0.0, |p| p.limit),
                        o.costs.mean,
                        host.actuations.len()
                    ));
                }
                if problems.is_empty() {
                    Ok(())
                } else {
                    Err(problems.join("\n  "))
                }
            },
        )?;
    }
    timed("misbehaving image on Cortex-M0", || {
        misbehaving(&tc, &qemu, &file)
    })?;
    for l in &table {
        println!("{l}");
    }
    println!(
        "xtask:   {ticks} control ticks in {wall:.2} s of wall-clock time in the loop: {:.0} ticks per second (emulator start-ups included)",
        ticks as f64 / wall.max(1e-9)
    );
    Ok(())
}

/// Item 5 of the module docs.
fn misbehaving(
    tc: &Toolchain,
    qemu: &std::path::Path,
    file: &scenario::File,
) -> Result<(), String> {
    let image = build_image(tc, Target::M0, "misbehave")?;
    const AT: u32 = 37;
    let run = |how: u8, params: Option<Vec<u8>>| {
        let fw = FirmwareRun {
            qemu: qemu.to_path_buf(),
            target: Target::M0,
            image: image.clone(),
            guards: Guards {
                tick: std::time::Duration::from_secs(1),
                ..Guards::default()
            },
            budget: None,
            record_actuations: false,
            params: Some(params.unwrap_or_else(|| {
                let mut b = vec![how];
                b.extend_from_slice(&AT.to_le_bytes());
                b
            })),
        };
        run_scenario(file, 0, &Params::NOMINAL, Record::None, &fw)
    };
    type Expect = fn(&Misbehaviour) -> bool;
    let cases: [(u8, &str, Expect); 6] = [
        (0, "endless loop", |m| {
            matches!(m, Misbehaviour::Limit { .. })
        }),
        (1, "hard fault", |m| {
            matches!(m, Misbehaviour::Fault { exception: 3, .. })
        }),
        (2, "early exit", |m| matches!(m, Misbehaviour::Exited(_))),
        (3, "panic", |m| matches!(m, Misbehaviour::Panic)),
        (4, "endless loop, interrupts off", |m| {
            matches!(m, Misbehaviour::NoAnswer(_))
        }),
        (5, "malformed answer", |m| {
            matches!(m, Misbehaviour::Protocol(_))
        }),
    ];
    for (how, name, expect) in cases {
        let t = Instant::now();
        let o = run(how, None).map_err(|e| format!("{name}: {e}"))?;
        let f = o
            .failure
            .as_ref()
            .ok_or_else(|| format!("{name}: the run reported no failure"))?;
        let ran = o.result.property("firmware_ran");
        if !expect(&f.what) || f.tick != u64::from(AT) || ran.is_none_or(|p| p.pass) {
            return Err(format!("{name}: unexpected report: {f} ({ran:?})"));
        }
        println!(
            "xtask:   {name}: firmware_ran fails ({:.2} s): {f}",
            t.elapsed().as_secs_f64()
        );
    }
    match run(0, Some(vec![1, 2])) {
        Err(e) if e.to_string().contains("code 1") => {
            println!("xtask:   refused parameter block: {e}");
        }
        other => return Err(format!("a refused parameter block gave {other:?}")),
    }
    let not_an_image = workspace_root().join("Cargo.toml");
    match lenz_harness::pil::elf::check(&not_an_image, Target::M0) {
        Err(e) if e.contains("not an ELF") => println!("xtask:   not an image: {e}"),
        other => return Err(format!("Cargo.toml as an image gave {other:?}")),
    }
    Ok(())
}

/// Item 5 of the module docs: compiles `pil/images/c/coil_driver.c` for `t` and links it with
/// the C API's library built with the runtime (the target images' linker script and memory
/// map: the runtime's vector table and reset handler).
fn build_c_image(tc: &Toolchain, cc: &CCompiler, t: Target) -> Result<std::path::PathBuf, String> {
    use super::ffi::{C_FLAGS, args, command, cpu_flags};
    use std::ffi::OsString;
    let lib = build_ffi_runtime(tc, t)?;
    let dir = lib
        .parent()
        .ok_or("library without a folder")?
        .to_path_buf();
    let images = lenz_harness::firmware::images_dir();
    let memory = images.join("memory").join(format!("{}.x", t.machine()));
    std::fs::copy(&memory, dir.join("memory.x"))
        .map_err(|e| format!("copying {}: {e}", memory.display()))?;
    let src_dir = workspace_root().join("pil").join("images").join("c");
    let include = workspace_root().join("ffi").join("include");
    let obj = dir.join("coil_driver.o");
    let cpu: Vec<OsString> = cpu_flags(t).iter().map(OsString::from).collect();
    let mut a: Vec<OsString> = C_FLAGS.iter().map(OsString::from).collect();
    a.extend(cpu.iter().cloned());
    a.extend(args([
        &"-I",
        &include,
        &"-I",
        &src_dir,
        &"-c",
        &src_dir.join("coil_driver.c"),
        &"-o",
        &obj,
    ]));
    command(&cc.gcc, &a)?;
    let image = dir.join("coil-driver-c.elf");
    let mut a = cpu;
    a.extend(args([
        &"-nostdlib",
        &"-Wl,--gc-sections",
        &"-T",
        &images.join("link.x"),
        &"-L",
        &dir,
        &obj,
        &lib,
        &"-lgcc",
        &"-o",
        &image,
    ]));
    command(&cc.gcc, &a)?;
    Ok(image)
}
