//! Ctrl-C during a bisection: the signal only raises a flag (the `ctrlc`
//! crate; SIGINT, SIGTERM and SIGHUP), and every long child (a measured
//! step, `git bisect run`) runs in a process group of its own, which the
//! waiting loop stops as a whole when the flag is up. The bisection then
//! returns normally, so the temporary worktree is removed on the way out.

use std::io::Read;
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::OnceLock;
use std::time::{Duration, Instant};

static INTERRUPTED: AtomicBool = AtomicBool::new(false);
static INSTALLED: OnceLock<Result<(), String>> = OnceLock::new();

/// The run was interrupted (exit code 130, as shells report SIGINT).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Interrupted;

/// Exit code after an interruption.
pub const EXIT_INTERRUPTED: u8 = 130;

/// Installs the handler (once per process).
pub fn install() -> Result<(), String> {
    INSTALLED
        .get_or_init(|| {
            ctrlc::set_handler(|| INTERRUPTED.store(true, Ordering::SeqCst))
                .map_err(|e| format!("cannot install the Ctrl-C handler: {e}"))
        })
        .clone()
}

/// Whether an interrupt arrived.
pub fn interrupted() -> bool {
    INTERRUPTED.load(Ordering::SeqCst)
}

/// Stops the process group of `child` (SIGTERM, then SIGKILL after a
/// grace period) and reaps it.
fn stop(child: &mut Child) {
    #[cfg(unix)]
    {
        use nix::sys::signal::{killpg, Signal};
        use nix::unistd::Pid;
        let group = Pid::from_raw(child.id() as i32);
        let _ = killpg(group, Signal::SIGTERM);
        let start = Instant::now();
        while start.elapsed() < Duration::from_secs(10) {
            if let Ok(Some(_)) = child.try_wait() {
                // The leader is gone; make sure its group is too.
                let _ = killpg(group, Signal::SIGKILL);
                return;
            }
            std::thread::sleep(Duration::from_millis(50));
        }
        let _ = killpg(group, Signal::SIGKILL);
    }
    let _ = child.kill();
    let _ = child.wait();
}

/// Runs `cmd` in a process group of its own with standard input closed
/// and standard output captured (standard error is passed through); its
/// exit status and output, or [`Interrupted`] after stopping the whole
/// group.
pub fn run_guarded(mut cmd: Command) -> Result<Result<(ExitStatus, String), String>, Interrupted> {
    #[cfg(unix)]
    {
        use std::os::unix::process::CommandExt;
        cmd.process_group(0);
    }
    if interrupted() {
        return Err(Interrupted);
    }
    let mut child = match cmd.stdin(Stdio::null()).stdout(Stdio::piped()).spawn() {
        Ok(c) => c,
        Err(e) => return Ok(Err(format!("cannot start {:?}: {e}", cmd.get_program()))),
    };
    let reader = child.stdout.take().map(|mut out| {
        std::thread::spawn(move || {
            let mut s = String::new();
            let _ = out.read_to_string(&mut s);
            s
        })
    });
    loop {
        if interrupted() {
            stop(&mut child);
            return Err(Interrupted);
        }
        match child.try_wait() {
            Ok(Some(status)) => {
                let text = reader.and_then(|h| h.join().ok()).unwrap_or_default();
                return Ok(Ok((status, text)));
            }
            Ok(None) => std::thread::sleep(Duration::from_millis(50)),
            Err(e) => {
                stop(&mut child);
                return Ok(Err(format!("lost the child process: {e}")));
            }
        }
    }
}
