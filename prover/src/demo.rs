pub fn run(_dir: &std::path::Path) -> std::process::ExitCode {
    std::process::ExitCode::SUCCESS
}
