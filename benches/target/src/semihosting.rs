//! Semihosting calls (`bkpt 0xAB`): console output and exit status, as implemented by QEMU with
//! `-semihosting-config enable=on,target=native`.

const SYS_WRITE0: u32 = 0x04;
const SYS_EXIT: u32 = 0x18;
/// `ADP_Stopped_ApplicationExit`: QEMU exits with status 0.
const EXIT_SUCCESS: usize = 0x2_0026;
/// `ADP_Stopped_RunTimeErrorUnknown`: QEMU exits with status 1.
const EXIT_FAILURE: usize = 0x2_0023;

fn call(op: u32, arg: usize) -> u32 {
    let ret;
    // SAFETY: `bkpt 0xAB` is the semihosting trap; the emulator reads r0/r1 and writes r0.
    // The argument points to memory that stays valid for the call.
    unsafe {
        core::arch::asm!("bkpt #0xab", inout("r0") op => ret, in("r1") arg, options(nostack));
    }
    ret
}

/// Writes `s` to the host console.
pub fn write_str(s: &str) {
    // SYS_WRITE0 takes a NUL-terminated string: copy through a small buffer.
    let mut buf = [0u8; 65];
    for chunk in s.as_bytes().chunks(64) {
        let (dst, rest) = buf.split_at_mut(chunk.len());
        dst.copy_from_slice(chunk);
        if let Some(end) = rest.first_mut() {
            *end = 0;
        }
        call(SYS_WRITE0, buf.as_ptr() as usize);
    }
}

/// Ends the emulation with success (`true`, status 0) or failure (status 1).
pub fn exit(success: bool) -> ! {
    call(SYS_EXIT, if success { EXIT_SUCCESS } else { EXIT_FAILURE });
    // Not reached under the emulator; on hardware without a debugger, stop here.
    loop {
        core::hint::spin_loop();
    }
}

/// `core::fmt` sink writing to the host console.
pub struct Out;

impl core::fmt::Write for Out {
    fn write_str(&mut self, s: &str) -> core::fmt::Result {
        write_str(s);
        Ok(())
    }
}

/// `println!` to the host console.
#[macro_export]
macro_rules! println {
    ($($arg:tt)*) => {{
        use core::fmt::Write as _;
        let _ = writeln!($crate::semihosting::Out, $($arg)*);
    }};
}
