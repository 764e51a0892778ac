fn main() {
    std::process::exit(seamlife::cli::main());
}
