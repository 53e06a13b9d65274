# Sourced by the test and bench scripts: a Python venv with the pinned reference libraries, made once.
# scikit-learn and scipy are reference implementations for the checks in tests/reference/ (versions pinned here).
VENV="${POPDECODE_VENV:-$PWD/target/reference-venv}"
REFERENCE_PACKAGES="scikit-learn==1.9.1 scipy==1.17.1 numpy==2.4.6 pandas==3.1.1 pytest==9.2.0 threadpoolctl==3.8.0 h5py==3.16.0 hdmf==6.2.0 pynwb==4.2.0"
if [ ! -x "$VENV/bin/python" ] || [ "$(cat "$VENV/.packages" 2>/dev/null)" != "$REFERENCE_PACKAGES" ]; then
  python3 -m venv "$VENV"
  "$VENV/bin/pip" install --quiet --disable-pip-version-check $REFERENCE_PACKAGES
  echo "$REFERENCE_PACKAGES" > "$VENV/.packages"
fi
export VENV
