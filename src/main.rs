//! The `stillpoint` binary: a thin shell around the library's command line.
fn main() {
    println!("stillpoint (skeleton)");
}
