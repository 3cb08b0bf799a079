//! Semihosting calls (`bkpt 0xAB`) as QEMU implements them with
//! `-semihosting-config enable=on,target=native`: open, read and write of host files, console
//! output and exit.

const SYS_OPEN: u32 = 0x01;
const SYS_WRITE0: u32 = 0x04;
const SYS_WRITE: u32 = 0x05;
const SYS_READ: u32 = 0x06;
const SYS_EXIT: u32 = 0x18;
/// `SYS_OPEN` mode `"rb"`.
pub const MODE_READ: usize = 1;
/// `SYS_OPEN` mode `"wb"`.
pub const MODE_WRITE: usize = 5;
/// `ADP_Stopped_ApplicationExit`: QEMU exits with status 0.
const EXIT_SUCCESS: usize = 0x2_0026;
/// `ADP_Stopped_RunTimeErrorUnknown`: QEMU exits with status 1.
const EXIT_FAILURE: usize = 0x2_0023;

fn call(op: u32, arg: usize) -> usize {
    let ret: u32;
    // SAFETY: `bkpt 0xAB` is the semihosting trap; the emulator reads r0/r1 and writes r0.
    // Every argument block and buffer passed stays valid for the call.
    unsafe {
        core::arch::asm!("bkpt #0xab", inout("r0") op => ret, in("r1") arg, options(nostack));
    }
    ret as usize
}

/// Opens the host file `name` (NUL-terminated) in `mode`; its handle.
pub fn open(name: &[u8], mode: usize) -> Option<usize> {
    let len = name.len().checked_sub(1)?;
    let block = [name.as_ptr() as usize, mode, len];
    let h = call(SYS_OPEN, block.as_ptr() as usize);
    (h != usize::MAX).then_some(h)
}

/// Reads exactly `buf.len()` bytes; `false` at the end of the file or on an error.
pub fn read_exact(handle: usize, buf: &mut [u8]) -> bool {
    let mut done = 0;
    while let Some(rest) = buf.get_mut(done..) {
        if rest.is_empty() {
            return true;
        }
        let block = [handle, rest.as_mut_ptr() as usize, rest.len()];
        let not_read = call(SYS_READ, block.as_ptr() as usize);
        if not_read >= rest.len() {
            return false;
        }
        done += rest.len() - not_read;
    }
    false
}

/// Writes all of `buf`; `false` on an error.
pub fn write_all(handle: usize, buf: &[u8]) -> bool {
    let block = [handle, buf.as_ptr() as usize, buf.len()];
    call(SYS_WRITE, block.as_ptr() as usize) == 0
}

/// Writes `s` (NUL-terminated) to the emulator's console.
pub fn console(s: &[u8]) {
    call(SYS_WRITE0, s.as_ptr() as usize);
}

/// Ends the emulation with status 0 (`true`) or 1.
pub fn exit(success: bool) -> ! {
    call(SYS_EXIT, if success { EXIT_SUCCESS } else { EXIT_FAILURE });
    // Not reached under the emulator; on hardware without a debugger, stop here.
    loop {
        core::hint::spin_loop();
    }
}
