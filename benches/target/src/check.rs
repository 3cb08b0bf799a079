//! The body of the on-target test images (`check`, `check2`): each runs its table of vector
//! checks.
//!
//! Output (semihosting): one `FAIL kernel=<name> vector=<index> …` line per difference (the
//! first few per kernel), one `kernel=<name> vectors=<n> failures=<m> state_bytes=<b>` line per
//! kernel, then `DONE failures=<total>`. Exit status 0 only if nothing differed.

use crate::kernels::{Check, Checker};
use crate::{check_kernel_table, println, semihosting};

/// Runs every check of `table` and exits with the verdict.
pub fn run(table: &[Check]) -> ! {
    check_kernel_table();
    let mut total = 0;
    for k in table {
        let mut c = Checker::new(k.name);
        (k.run)(&mut c);
        println!(
            "kernel={} vectors={} failures={} state_bytes={}",
            k.name, c.vectors, c.failures, k.state_bytes
        );
        if c.vectors == 0 {
            println!("FAIL kernel={} has no vectors", k.name);
            total += 1;
        }
        total += c.failures;
    }
    println!("DONE failures={total}");
    semihosting::exit(total == 0)
}
