//! Android entry point: hands the activity to Slint and runs the shared app.
//!
//! Design choice: nothing app-specific lives here. The storage path comes from
//! `AndroidApp::internal_data_path()` (the `directories` crate cannot find it on Android) and
//! is injected into `molefeed::app::run`, the same entry the desktop binary uses. The system
//! back key reaches the UI as `Key.Back`, which navigates back; on the first screen it closes
//! the app, as Android users expect.

#[cfg(target_os = "android")]
#[unsafe(no_mangle)]
fn android_main(app: slint::android::AndroidApp) {
    use molefeed::app::{RunOptions, numbers::Lang};

    let data_dir = app.internal_data_path();
    let lang = app.config().language().and_then(|l| Lang::from_tag(&l));
    if let Err(e) = slint::android::init(app) {
        eprintln!("molefeed: cannot start the Android backend: {e}");
        return;
    }
    let options = RunOptions {
        data_dir,
        lang,
        quit_on_root_back: true,
    };
    if let Err(e) = molefeed::app::run(options) {
        eprintln!("molefeed: the app stopped: {e}");
    }
}
