//! Is a file a thumb image this core can run? Read from the ELF header and the Arm build
//! attributes (`.ARM.attributes`, "Addenda to, and Errata in, the ABI for the Arm
//! Architecture", section "Build attributes"), before the emulator is started.

use std::path::Path;

use crate::firmware::Target;

/// Largest image read, bytes (the emulated machines have at most 4 MiB of code memory).
const MAX_BYTES: u64 = 64 << 20;
const EM_ARM: u16 = 40;
const EF_ARM_ABI_FLOAT_HARD: u32 = 0x400;
const SHT_ARM_ATTRIBUTES: u32 = 0x7000_0003;
const TAG_CPU_ARCH: u64 = 6;
const TAG_CPU_ARCH_PROFILE: u64 = 7;

/// `Tag_CPU_arch` values.
const ARCH_V7: u64 = 10;
const ARCH_V6_M: u64 = 11;
const ARCH_V6S_M: u64 = 12;
const ARCH_V7E_M: u64 = 13;

/// What the image says about itself.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ImageInfo {
    /// Entry point.
    pub entry: u32,
    /// Built for the hardware floating-point calling convention.
    pub hard_float: bool,
    /// `Tag_CPU_arch`, when the image has build attributes.
    pub cpu_arch: Option<u64>,
    /// `Tag_CPU_arch_profile` (`b'M'` for microcontrollers), when given.
    pub profile: Option<u64>,
}

fn u16_at(b: &[u8], at: usize) -> Option<u16> {
    Some(u16::from_le_bytes(b.get(at..at + 2)?.try_into().ok()?))
}

fn u32_at(b: &[u8], at: usize) -> Option<u32> {
    Some(u32::from_le_bytes(b.get(at..at + 4)?.try_into().ok()?))
}

fn uleb(b: &[u8], at: &mut usize) -> Option<u64> {
    let mut v = 0u64;
    for shift in (0..64).step_by(7) {
        let byte = *b.get(*at)?;
        *at += 1;
        v |= u64::from(byte & 0x7F) << shift;
        if byte & 0x80 == 0 {
            return Some(v);
        }
    }
    None
}

fn ntbs(b: &[u8], at: &mut usize) -> Option<()> {
    let end = b.get(*at..)?.iter().position(|&c| c == 0)?;
    *at += end + 1;
    Some(())
}

/// `Tag_CPU_arch` and `Tag_CPU_arch_profile` of the "aeabi" file attributes.
fn attributes(sec: &[u8]) -> Option<(Option<u64>, Option<u64>)> {
    if sec.first() != Some(&b'A') {
        return None;
    }
    let mut at = 1;
    let (mut arch, mut profile) = (None, None);
    while at < sec.len() {
        let len = u32_at(sec, at)? as usize;
        let sub = sec.get(at..at.checked_add(len)?)?;
        at += len.max(1);
        let mut p = 4;
        let name_end = sub.get(p..)?.iter().position(|&c| c == 0)?;
        let vendor = sub.get(p..p + name_end)?;
        p += name_end + 1;
        if vendor != b"aeabi" {
            continue;
        }
        while p < sub.len() {
            let tag = *sub.get(p)?;
            let size = u32_at(sub, p + 1)? as usize;
            let body = sub.get(p + 5..p.checked_add(size)?)?;
            p += size.max(1);
            if tag != 1 {
                continue; // section or symbol attributes
            }
            let mut q = 0;
            while q < body.len() {
                let t = uleb(body, &mut q)?;
                match t {
                    4 | 5 | 67 => ntbs(body, &mut q)?,
                    32 => {
                        uleb(body, &mut q)?;
                        ntbs(body, &mut q)?;
                    }
                    t if t > 32 && t % 2 == 1 => ntbs(body, &mut q)?,
                    _ => {
                        let v = uleb(body, &mut q)?;
                        if t == TAG_CPU_ARCH {
                            arch = Some(v);
                        } else if t == TAG_CPU_ARCH_PROFILE {
                            profile = Some(v);
                        }
                    }
                }
            }
        }
    }
    Some((arch, profile))
}

/// Reads the ELF header and build attributes of `bytes`.
///
/// # Errors
///
/// Not a 32-bit little-endian Arm ELF executable, or a header that does not fit the file.
pub fn info(bytes: &[u8]) -> Result<ImageInfo, String> {
    if bytes.get(..4) != Some(b"\x7fELF".as_slice()) {
        return Err("not an ELF file".into());
    }
    if bytes.get(4) != Some(&1) || bytes.get(5) != Some(&1) {
        return Err("not a 32-bit little-endian ELF file (a Cortex-M image is both)".into());
    }
    let bad = || "truncated ELF header".to_string();
    let machine = u16_at(bytes, 18).ok_or_else(bad)?;
    if machine != EM_ARM {
        return Err(format!(
            "an ELF file for machine {machine}, not for Arm ({EM_ARM})"
        ));
    }
    let entry = u32_at(bytes, 24).ok_or_else(bad)?;
    let flags = u32_at(bytes, 36).ok_or_else(bad)?;
    let shoff = u32_at(bytes, 32).ok_or_else(bad)? as usize;
    let shentsize = usize::from(u16_at(bytes, 46).ok_or_else(bad)?);
    let shnum = usize::from(u16_at(bytes, 48).ok_or_else(bad)?);
    let (mut arch, mut profile) = (None, None);
    for k in 0..shnum {
        let h = shoff + k * shentsize;
        if u32_at(bytes, h + 4) == Some(SHT_ARM_ATTRIBUTES) {
            let off = u32_at(bytes, h + 16).ok_or_else(bad)? as usize;
            let size = u32_at(bytes, h + 20).ok_or_else(bad)? as usize;
            let sec = bytes
                .get(off..off.saturating_add(size))
                .ok_or("the build attributes lie outside the file")?;
            (arch, profile) = attributes(sec).ok_or("unreadable build attributes")?;
        }
    }
    Ok(ImageInfo {
        entry,
        hard_float: flags & EF_ARM_ABI_FLOAT_HARD != 0,
        cpu_arch: arch,
        profile,
    })
}

/// Why `info` cannot run on `target`, if it cannot.
#[must_use]
pub fn incompatibility(info: &ImageInfo, target: Target) -> Option<String> {
    if info.entry & 1 == 0 {
        return Some(format!(
            "its entry point {:#x} is not a thumb address (a Cortex-M runs thumb code only)",
            info.entry
        ));
    }
    if info.hard_float && target != Target::M4f {
        return Some(format!(
            "it is built for the hardware floating-point ABI, which the {} lacks",
            target.core()
        ));
    }
    let arch_ok = match info.cpu_arch {
        None => true,
        Some(a) => match target {
            Target::M0 => matches!(a, ARCH_V6_M | ARCH_V6S_M),
            Target::M3 => {
                matches!(a, ARCH_V6_M | ARCH_V6S_M)
                    || (a == ARCH_V7 && info.profile.is_none_or(|p| p == u64::from(b'M')))
            }
            Target::M4f => {
                matches!(a, ARCH_V6_M | ARCH_V6S_M | ARCH_V7E_M)
                    || (a == ARCH_V7 && info.profile.is_none_or(|p| p == u64::from(b'M')))
            }
        },
    };
    (!arch_ok).then(|| {
        let name = match info.cpu_arch {
            Some(ARCH_V7) => "Armv7".to_string(),
            Some(ARCH_V6_M) | Some(ARCH_V6S_M) => "Armv6-M".to_string(),
            Some(ARCH_V7E_M) => "Armv7E-M".to_string(),
            Some(a) => format!("Arm architecture code {a}"),
            None => "an unknown architecture".to_string(),
        };
        format!(
            "it is built for {name}, which the {} cannot run",
            target.core()
        )
    })
}

/// Checks that `path` is an image `target` can run.
///
/// # Errors
///
/// The file cannot be read, is not an Arm ELF image, or is built for another core; the
/// message names the file.
pub fn check(path: &Path, target: Target) -> Result<ImageInfo, String> {
    let shown = path.display();
    let len = std::fs::metadata(path)
        .map_err(|e| format!("--firmware {shown}: {e}"))?
        .len();
    if len > MAX_BYTES {
        return Err(format!(
            "--firmware {shown}: {len} bytes, more than any image for the emulated machines"
        ));
    }
    let bytes = std::fs::read(path).map_err(|e| format!("--firmware {shown}: {e}"))?;
    let i = info(&bytes).map_err(|e| format!("--firmware {shown}: {e}"))?;
    if let Some(why) = incompatibility(&i, target) {
        return Err(format!(
            "--firmware {shown}: not an image for --core {}: {why}",
            target.key()
        ));
    }
    Ok(i)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn header(machine: u16, entry: u32, flags: u32) -> Vec<u8> {
        let mut b = vec![0u8; 52];
        b[..4].copy_from_slice(b"\x7fELF");
        b[4] = 1;
        b[5] = 1;
        b[18..20].copy_from_slice(&machine.to_le_bytes());
        b[24..28].copy_from_slice(&entry.to_le_bytes());
        b[36..40].copy_from_slice(&flags.to_le_bytes());
        b
    }

    #[test]
    fn headers_are_read_and_refused_with_a_reason() {
        assert!(info(b"#!/bin/sh\n").unwrap_err().contains("not an ELF"));
        let mut b64 = header(EM_ARM, 1, 0);
        b64[4] = 2;
        assert!(info(&b64).unwrap_err().contains("32-bit"));
        assert!(info(&header(62, 1, 0)).unwrap_err().contains("machine 62"));
        let i = info(&header(EM_ARM, 0x101, EF_ARM_ABI_FLOAT_HARD)).unwrap();
        assert!(i.hard_float);
        assert!(
            incompatibility(&i, Target::M0)
                .unwrap()
                .contains("floating-point")
        );
        assert_eq!(incompatibility(&i, Target::M4f), None);
        let arm = info(&header(EM_ARM, 0x100, 0)).unwrap();
        assert!(incompatibility(&arm, Target::M3).unwrap().contains("thumb"));
    }

    #[test]
    fn architecture_attribute_decides_the_core() {
        // Format version "A", one "aeabi" subsection, one file attribute block: Tag_CPU_arch (6)
        // = 13 (v7E-M), Tag_CPU_arch_profile (7) = 'M', Tag_ARM_ISA_use (8) = 0.
        let mut sec = vec![b'A'];
        let body = [6u8, 13, 7, b'M', 8, 0];
        let file_len = 5 + body.len() as u32;
        let sub_len = 4 + 6 + file_len;
        sec.extend_from_slice(&sub_len.to_le_bytes());
        sec.extend_from_slice(b"aeabi\0");
        sec.push(1);
        sec.extend_from_slice(&file_len.to_le_bytes());
        sec.extend_from_slice(&body);
        assert_eq!(attributes(&sec), Some((Some(13), Some(u64::from(b'M')))));
        let i = ImageInfo {
            entry: 0x41,
            hard_float: false,
            cpu_arch: Some(ARCH_V7E_M),
            profile: Some(u64::from(b'M')),
        };
        assert!(
            incompatibility(&i, Target::M0)
                .unwrap()
                .contains("Armv7E-M")
        );
        assert!(incompatibility(&i, Target::M3).is_some());
        assert_eq!(incompatibility(&i, Target::M4f), None);
        let v6 = ImageInfo {
            cpu_arch: Some(ARCH_V6S_M),
            ..i
        };
        for t in crate::firmware::TARGETS {
            assert_eq!(incompatibility(&v6, t), None);
        }
    }
}
