//! Build steps: re-embed migrations when they change, and compile the `.slint` UI.

fn main() {
    println!("cargo:rerun-if-changed=migrations/");
    #[cfg(feature = "gui")]
    compile_ui();
}

#[cfg(feature = "gui")]
fn compile_ui() {
    // Debug info lets the UI tests find elements by id and accessible label.
    let config = slint_build::CompilerConfiguration::new().with_debug_info(true);
    if let Err(e) = slint_build::compile_with_config("ui/app.slint", config) {
        panic!("cannot compile ui/app.slint: {e}");
    }
}
