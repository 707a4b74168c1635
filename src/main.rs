fn main() -> std::process::ExitCode {
    plumbline::cli::main()
}
