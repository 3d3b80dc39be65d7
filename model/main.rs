use clap::Parser;

/// Exit status of a program stopped because its output pipe closed: 128 + 13
/// (SIGPIPE), as a shell reports for tools killed by that signal (common
/// practice).
const CLOSED_PIPE_STATUS: i32 = 141;

fn main() {
    // Rust ignores SIGPIPE, so printing into a closed pipe (`| head`) panics
    // in `print!`. That is the reader's choice, not a fault: stop quietly
    // with the conventional status instead of a panic message.
    let default_hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        let payload = info.payload();
        let message = payload
            .downcast_ref::<String>()
            .map(String::as_str)
            .or_else(|| payload.downcast_ref::<&str>().copied())
            .unwrap_or("");
        if message.contains("Broken pipe") {
            std::process::exit(CLOSED_PIPE_STATUS);
        }
        default_hook(info)
    }));
    let command_line = std::env::args().collect::<Vec<_>>().join(" ");
    let cli = stormcharge::cli::Cli::parse();
    let code = stormcharge::cli::main_with(cli, &command_line);
    if code != 0 {
        // After a failed write (a full disk, say) the HDF5 library may hold a
        // file it could not close, and its exit handler then crashes
        // (measured: a segmentation fault in its file-close callback). Every
        // file this program writes is already marked incomplete or closed,
        // so a failed run leaves without the library's exit handlers.
        use std::io::Write;
        let _ = std::io::stdout().flush();
        let _ = std::io::stderr().flush();
        // SAFETY: `_exit` ends the process at once with the given status;
        // nothing is left that needs the exit handlers of a failed run.
        unsafe { _exit(code) }
    }
    std::process::exit(code);
}

extern "C" {
    /// POSIX `_exit`: terminate without running `atexit` handlers.
    fn _exit(status: i32) -> !;
}
