use clap::Parser;

fn main() {
    let command_line = std::env::args().collect::<Vec<_>>().join(" ");
    let cli = stormcharge::cli::Cli::parse();
    std::process::exit(stormcharge::cli::main_with(cli, &command_line));
}
