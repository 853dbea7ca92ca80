//! The Ambit desktop app's Rust side: the Tauri commands of
//! `docs/APP-API.md`, the job runner for long work, microphone recording
//! with a live pitch trace, and the first-start demo library.
//!
//! Architecture invariant: no analysis here. Every command parses its
//! arguments, calls the engine (`ambit::…`) or the library
//! (`ambit::library::Library`), and returns the engine's own serde types or
//! the shared JSON views of `ambit::views`. Long work runs on its own
//! thread and reports through `job-progress`/`job-done` events.

pub mod commands;
pub mod error;
pub mod jobs;
pub mod recorder;
pub mod state;

use tauri::{Manager, Runtime};

pub use state::AppState;

/// `builder` with the app's state and every command, on any runtime (the
/// real one, or `tauri::test::mock_builder()` in tests).
pub fn with_commands<R: Runtime>(builder: tauri::Builder<R>, state: AppState) -> tauri::Builder<R> {
    builder
        .manage(state)
        .invoke_handler(tauri::generate_handler![
            commands::library::library_status,
            commands::library::library_info,
            commands::library::library_open,
            commands::library::library_create_empty,
            commands::library::library_open_demo,
            commands::singers::singers_list,
            commands::singers::singer_add_typed,
            commands::singers::singer_set_archived,
            commands::singers::singer_delete,
            commands::singers::roster_import_preview,
            commands::singers::roster_import_commit,
            commands::singers::roster_export,
            commands::singers::singer_history,
            commands::audition::audition_tasks,
            commands::audition::recording_start,
            commands::audition::recording_stop,
            commands::audition::audition_analyse,
            commands::audition::audition_save,
            commands::audition::job_cancel,
            commands::pieces::pieces_list,
            commands::pieces::piece_import,
            commands::pieces::piece_analysis,
            commands::pieces::piece_set_mapping,
            commands::pieces::notation_excerpt,
            commands::planning::fit_matrix,
            commands::planning::place_solve,
            commands::planning::place_move,
            commands::planning::place_undo,
            commands::planning::place_redo,
            commands::planning::seating_export,
            commands::planning::scenario_save,
            commands::planning::scenarios_list,
            commands::planning::transpose_advice,
            commands::planning::cautions,
        ])
}

/// Starts the desktop app: opens the library named by `AMBIT_LIBRARY`, or
/// else the demo library in the app's data folder (prepared in the
/// background on first start).
pub fn run() {
    let result = with_commands(tauri::Builder::default(), AppState::default())
        .plugin(tauri_plugin_dialog::init())
        .setup(|app| {
            let demo_folder = app.path().app_data_dir()?.join("demo-library");
            let state = app.state::<AppState>();
            state.set_demo_folder(demo_folder);
            // Opens an existing library at once; a first start prepares the
            // demo library in the background while the window shows its
            // progress (`library_status`, `library-status` events). A
            // failure is shown by the UI from the status.
            state.open_startup_library(app.handle());
            #[cfg(target_os = "linux")]
            if let Some(window) = app.get_webview_window("main") {
                // The app shows only its own bundled pages, so WebKit's
                // document-viewer cache model (no page or resource caches
                // for browsing) fits it and keeps the web process smaller.
                let _ = window.with_webview(|webview| {
                    use webkit2gtk::{WebContextExt, WebViewExt};
                    if let Some(context) = webview.inner().context() {
                        context.set_cache_model(webkit2gtk::CacheModel::DocumentViewer);
                    }
                });
            }
            Ok(())
        })
        .run(tauri::generate_context!());
    if let Err(error) = result {
        eprintln!("ambit: {error}");
        std::process::exit(1);
    }
}
