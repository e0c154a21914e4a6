//! The settings shipped in deploy/ load as valid server settings and say what their comments say:
//! the container image's file, the Kubernetes ConfigMap's, and the edge-gateway file of the
//! systemd install (whose certificate and token paths are pointed at stand-in files here, since
//! the settings check that those files exist).

use std::path::{Path, PathBuf};

use binodal_server::PHASE_SERVICE_NAME;
use binodal_server::settings::{Settings, SettingsSources};

fn deploy_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../deploy")
}

fn read(relative: &str) -> String {
    std::fs::read_to_string(deploy_dir().join(relative))
        .unwrap_or_else(|error| panic!("cannot read deploy/{relative}: {error}"))
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("binodal-deploy-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch directory");
    dir
}

/// Loads settings text as the server would load its `--config` file, with no environment.
fn load(text: &str, dir: &Path) -> Settings {
    let file = dir.join("binodal.toml");
    std::fs::write(&file, text).expect("write settings");
    Settings::load(&SettingsSources {
        file: Some(file),
        environment: Vec::new(),
        listen: None,
    })
    .unwrap_or_else(|error| panic!("settings do not load: {error:#?}"))
    .settings
}

/// A token file with one token of the accepted shape.
fn token_file(dir: &Path) -> PathBuf {
    let path = dir.join("tokens");
    std::fs::write(&path, format!("{}\n", "ab".repeat(32))).expect("write tokens");
    path
}

/// The lines of the ConfigMap's `binodal.toml` entry, without their YAML indentation.
fn config_map_settings(yaml: &str) -> String {
    let mut lines = yaml
        .lines()
        .skip_while(|line| line.trim() != "binodal.toml: |");
    lines.next().expect("a binodal.toml entry");
    lines
        .take_while(|line| line.is_empty() || line.starts_with("    "))
        .map(|line| line.strip_prefix("    ").unwrap_or(line))
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn container_settings_load() {
    let dir = scratch("container");
    let settings = load(&read("container/binodal.toml"), &dir);
    assert_eq!(settings.listen_address.to_string(), "0.0.0.0:50051");
    assert!(settings.metrics.enabled);
    assert_eq!(settings.limits.max_connection_age_s, 300);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn kubernetes_settings_load_and_the_probes_name_the_phase_service() {
    let dir = scratch("kubernetes");
    let text = config_map_settings(&read("kubernetes/configmap.yaml"));
    let tokens = token_file(&dir);
    let text = text.replace(
        "/etc/binodal/secrets/tokens",
        tokens.to_str().expect("path"),
    );
    let settings = load(&text, &dir);
    assert!(
        settings.auth.required(),
        "tokens come from the mounted Secret"
    );
    assert!(!settings.reflection);
    assert_eq!(settings.metrics.listen_address.port(), 9464);

    let deployment = read("kubernetes/deployment.yaml");
    assert!(deployment.contains(&format!("service: {PHASE_SERVICE_NAME}")));
    assert!(deployment.contains("mountPath: /etc/binodal/secrets"));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn edge_gateway_settings_load_with_tls_and_tokens() {
    let dir = scratch("gateway");
    std::fs::create_dir_all(dir.join("tls")).expect("tls directory");
    for file in ["tls/server.crt", "tls/server.key", "tls/plant-ca.crt"] {
        std::fs::write(dir.join(file), "stand-in PEM").expect("stand-in file");
    }
    token_file(&dir);
    let text = read("systemd/binodal.toml").replace(
        "/etc/binodal/",
        &format!("{}/", dir.to_str().expect("path")),
    );
    let settings = load(&text, &dir);
    assert!(settings.tls.enabled() && settings.tls.mutual());
    assert!(settings.auth.required());
    assert!(settings.metrics.listen_address.ip().is_loopback());
    assert!(!settings.listen_address.ip().is_unspecified());
    std::fs::remove_dir_all(&dir).ok();
}
