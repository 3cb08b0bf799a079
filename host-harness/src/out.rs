//! Standard output of the `lenz` commands.
//!
//! A command writes its text with [`outln!`] into a buffer of its own thread; the binary's `run`
//! writes that buffer to stdout once, after the command has finished, and only when it
//! succeeded. So:
//!
//! - a command that fails (exit 2) prints nothing on stdout, by construction;
//! - stdout is written in one place, with every error checked ([`write_to`]): a closed pipe
//!   (`lenz sim … | head -c 10`) ends the output quietly and keeps the command's exit code;
//!   any other write error (`> /dev/full`) is exit 2 with a message on stderr. No `println!`
//!   is left on a path a user reaches, so nothing panics on a broken stdout.
//!
//! The buffer holds the text a command prints (tables, a summary, one JSON document), never
//! waveforms: those go to files.

use std::cell::RefCell;
use std::io::{self, Write};

thread_local! {
    static BUFFER: RefCell<Vec<u8>> = const { RefCell::new(Vec::new()) };
}

/// Appends `value` as pretty JSON and a line end to this thread's output buffer, serialized
/// straight into it (a large output, such as a sweep's run records, is not held twice).
///
/// # Errors
///
/// The value cannot be serialized (the buffer keeps what was written before).
pub fn json<T: serde::Serialize>(value: &T) -> Result<(), serde_json::Error> {
    BUFFER.with(|b| {
        let mut b = b.borrow_mut();
        let keep = b.len();
        match serde_json::to_writer_pretty(&mut *b, value) {
            Ok(()) => {
                b.push(b'\n');
                Ok(())
            }
            Err(e) => {
                b.truncate(keep);
                Err(e)
            }
        }
    })
}

/// Appends one line to this thread's output buffer (use [`outln!`]).
pub fn line(args: std::fmt::Arguments<'_>) {
    BUFFER.with(|b| {
        let mut b = b.borrow_mut();
        // Writing into a `Vec` fails only when a `Display` impl reports an error; the text
        // written so far stays.
        let _ = b.write_fmt(args);
        b.push(b'\n');
    });
}

/// Takes (and clears) this thread's output buffer (UTF-8 text).
#[must_use]
pub fn take() -> Vec<u8> {
    BUFFER.with(|b| std::mem::take(&mut *b.borrow_mut()))
}

/// Like `println!`, into the output buffer ([module docs](self)).
macro_rules! outln {
    () => {
        $crate::out::line(format_args!(""))
    };
    ($($arg:tt)*) => {
        $crate::out::line(format_args!($($arg)*))
    };
}

/// How writing the output ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Written {
    /// Everything was written.
    All,
    /// The reader went away (a closed pipe): the rest was dropped.
    Closed,
}

/// Writes `text` to `w` and flushes it.
///
/// # Errors
///
/// Any write error except a closed pipe ([`Written::Closed`]).
pub fn write_to(w: &mut impl Write, text: &[u8]) -> io::Result<Written> {
    match w.write_all(text).and_then(|()| w.flush()) {
        Ok(()) => Ok(Written::All),
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => Ok(Written::Closed),
        Err(e) => Err(e),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    struct Failing(io::ErrorKind);

    impl Write for Failing {
        fn write(&mut self, _: &[u8]) -> io::Result<usize> {
            Err(io::Error::from(self.0))
        }
        fn flush(&mut self) -> io::Result<()> {
            Ok(())
        }
    }

    #[test]
    fn buffer_collects_lines_and_is_taken_once() {
        let _ = take();
        outln!("a {}", 1);
        outln!();
        assert_eq!(take(), b"a 1\n\n");
        assert_eq!(take(), b"");
    }

    #[test]
    fn json_goes_straight_into_the_buffer() {
        let _ = take();
        outln!("head");
        json(&serde_json::json!({ "a": [1, 2] })).expect("serializable");
        assert_eq!(take(), b"head\n{\n  \"a\": [\n    1,\n    2\n  ]\n}\n");
    }

    #[test]
    fn closed_pipe_is_quiet_other_errors_are_not() {
        let mut v = Vec::new();
        assert_eq!(write_to(&mut v, b"x").ok(), Some(Written::All));
        assert_eq!(v, b"x");
        let closed = write_to(&mut Failing(io::ErrorKind::BrokenPipe), b"x");
        assert_eq!(closed.ok(), Some(Written::Closed));
        let full = write_to(&mut Failing(io::ErrorKind::StorageFull), b"x");
        assert!(full.is_err());
    }
}
