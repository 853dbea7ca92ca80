//! The app on Tauri's mock runtime, shared by the app's integration tests:
//! build it around a state, and call its commands through IPC as the UI does.

// Each test binary uses its own part of this harness.
#![allow(dead_code)]

use std::sync::mpsc;
use std::time::Duration;

use ambit_app::AppState;
use serde_json::Value;
use tauri::Listener;
use tauri::test::{INVOKE_KEY, MockRuntime, mock_builder, mock_context, noop_assets};
use tauri::webview::InvokeRequest;
use tauri::{App, WebviewWindow};

pub struct TestApp {
    pub app: App<MockRuntime>,
    pub window: WebviewWindow<MockRuntime>,
    /// The scratch folder the test's files live in (removed at the end).
    pub folder: tempfile::TempDir,
}

impl TestApp {
    /// The app with `state` and every command, and its main window.
    pub fn build(state: AppState, folder: tempfile::TempDir) -> TestApp {
        let app = ambit_app::with_commands(mock_builder(), state)
            .build(mock_context(noop_assets()))
            .expect("the app builds");
        let window = tauri::WebviewWindowBuilder::new(&app, "main", Default::default())
            .build()
            .expect("a window");
        TestApp {
            app,
            window,
            folder,
        }
    }

    /// Calls a command; an error is its message.
    pub fn call(&self, command: &str, arguments: Value) -> Result<Value, String> {
        self.call_typed(command, arguments).map_err(|error| {
            error["message"]
                .as_str()
                .map_or_else(|| error.to_string(), str::to_string)
        })
    }

    /// Calls a command; an error is the whole `{ kind, message }` object.
    pub fn call_typed(&self, command: &str, arguments: Value) -> Result<Value, Value> {
        tauri::test::get_ipc_response(
            &self.window,
            InvokeRequest {
                cmd: command.into(),
                callback: tauri::ipc::CallbackFn(0),
                error: tauri::ipc::CallbackFn(1),
                // The app's own origin on Linux and macOS (Windows: http://tauri.localhost).
                url: "tauri://localhost".parse().expect("a URL"),
                body: tauri::ipc::InvokeBody::Json(arguments),
                headers: Default::default(),
                invoke_key: INVOKE_KEY.to_string(),
            },
        )
        .map(|body| body.deserialize::<Value>().expect("JSON"))
    }

    pub fn ok(&self, command: &str, arguments: Value) -> Value {
        self.call(command, arguments)
            .unwrap_or_else(|error| panic!("{command}: {error}"))
    }

    /// Starts a job and waits for its `job-done` event.
    pub fn job(&self, command: &str, arguments: Value) -> Value {
        self.job_with(command, arguments, |_| {})
    }

    /// Starts a job, runs `started` with its id, then waits for its
    /// `job-done` event.
    pub fn job_with(&self, command: &str, arguments: Value, started: impl FnOnce(&Value)) -> Value {
        let (sender, receiver) = mpsc::channel::<String>();
        let id = self.app.listen_any("job-done", move |event| {
            let _ = sender.send(event.payload().to_string());
        });
        let job = self.ok(command, arguments);
        started(&job);
        let done = loop {
            let payload = receiver
                .recv_timeout(Duration::from_secs(600))
                .expect("job-done within ten minutes");
            let done: Value = serde_json::from_str(&payload).expect("JSON");
            if done["job"] == job {
                break done;
            }
        };
        self.app.unlisten(id);
        done
    }
}
