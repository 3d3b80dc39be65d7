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
    std::process::exit(stormcharge::cli::main_with(cli, &command_line));
}
