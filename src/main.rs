fn main() -> std::process::ExitCode {
    tapwright::cli::run_from_env()
}
