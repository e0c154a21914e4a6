#!/usr/bin/env bash
# Checks the deployment files with validators from the package registries:
# - the Kubernetes manifests against the Kubernetes JSON schemas (strict: unknown fields fail),
#   for the oldest and newest Kubernetes versions supported (1.30 and 1.37);
# - the container file with hadolint;
# - the systemd unit with `systemd-analyze verify`, and its exposure with
#   `systemd-analyze security`, where systemd-analyze is installed.
# The settings files are checked by the server's tests (tests/cases/deploy.rs). The container
# image itself is not built here: that needs a running container engine.
set -euo pipefail
cd "$(dirname "$0")"

venv="${BINODAL_DEPLOY_VENV:-${TMPDIR:-/tmp}/binodal-deploy-venv}"
if [ ! -x "$venv/bin/kubernetes-validate" ] || [ ! -x "$venv/bin/hadolint" ]; then
    python3 -m venv "$venv"
    "$venv/bin/python" -m pip install --quiet --disable-pip-version-check -r requirements.txt
fi

manifests=()
for file in kubernetes/*.yaml; do
    # kustomization.yaml is kustomize's own file, not a Kubernetes resource.
    [ "$(basename "$file")" = kustomization.yaml ] || manifests+=("$file")
done
for version in 1.30.0 1.37.0; do
    echo "deploy: Kubernetes manifests against the $version schemas (strict)"
    "$venv/bin/kubernetes-validate" --strict --quiet -k "$version" "${manifests[@]}"
done

echo "deploy: Dockerfile with hadolint $("$venv/bin/hadolint" --version | awk '{print $NF}')"
"$venv/bin/hadolint" --failure-threshold info Dockerfile

if command -v systemd-analyze > /dev/null; then
    echo "deploy: systemd unit with systemd-analyze"
    scratch="$(mktemp -d)"
    trap 'rm -rf "$scratch"' EXIT
    # verify insists that ExecStart exists: point it at a stand-in, nothing else changes.
    printf '#!/bin/sh\nexit 0\n' > "$scratch/binodal-server"
    chmod +x "$scratch/binodal-server"
    sed "s#/usr/local/bin/binodal-server#$scratch/binodal-server#" systemd/binodal.service \
        > "$scratch/binodal.service"
    systemd-analyze verify "$scratch/binodal.service"
    # Exposure score 0 (locked down) to 10 (exposed); fail above 2.0.
    systemd-analyze security --offline=yes --threshold=20 "$scratch/binodal.service" \
        | tail -n 1
else
    echo "deploy: systemd-analyze is not installed here: the systemd unit is not checked"
fi
echo "deploy: all checks passed"
