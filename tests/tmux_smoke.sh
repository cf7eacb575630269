#!/usr/bin/env bash
# Drive the real fieldkit terminal app in tmux, the way a person would, and check the screen.
#
#   tests/tmux_smoke.sh            # uses `python -m fieldkit`; set PYTHON=... to choose another
#
# Starts `fieldkit demo` with a throw-away FIELDKIT_HOME in an 80x24 tmux window, resumes the demo
# visit, types a typo (refused inline), saves a reading, opens the general caution, quits, starts
# again and checks the reading is still there. Exits non-zero (and prints the screen) on failure.
set -euo pipefail

PYTHON=${PYTHON:-python}
command -v tmux >/dev/null || { echo "tmux_smoke: tmux is not installed" >&2; exit 2; }

WORK=$(mktemp -d)
SESSION="fieldkit-smoke-$$"
export FIELDKIT_HOME="$WORK/home"
cleanup() {
    tmux kill-session -t "$SESSION" 2>/dev/null || true
    rm -rf "$WORK"
}
trap cleanup EXIT

start_app() {
    tmux kill-session -t "$SESSION" 2>/dev/null || true
    tmux new-session -d -s "$SESSION" -x 80 -y 24 \
        "FIELDKIT_HOME='$FIELDKIT_HOME' TERM=xterm-256color '$PYTHON' -m fieldkit demo; echo \"EXITED \$?\"; sleep 60"
}

screen() { tmux capture-pane -p -t "$SESSION"; }

wait_for() {  # wait_for TEXT [SECONDS]
    local text=$1 seconds=${2:-30} i
    for ((i = 0; i < seconds * 5; i++)); do
        if screen | grep -qF -- "$text"; then return 0; fi
        sleep 0.2
    done
    echo "tmux_smoke: FAILED waiting for: $text" >&2
    echo "----- screen -----" >&2
    screen >&2
    exit 1
}

keys() { tmux send-keys -t "$SESSION" "$@"; }
typed() { tmux send-keys -t "$SESSION" -l "$1"; }

start_app
wait_for "Open visits"
wait_for "RHS-25-0301"
keys r
wait_for "NEXT →"
wait_for "4 readings"
wait_for "f1 Keys"

typed "2O bar"
wait_for "is not a unit fieldkit knows"
keys Enter
wait_for "nothing saved"

keys C-u
typed "27,4 bar"
wait_for "= 27.4 bar"
keys Enter
wait_for "saved 27,4 bar"
wait_for "5 readings"

keys F2
wait_for "Follow the machine's own procedures"
keys F2
wait_for "NEXT →"

keys C-q
wait_for "EXITED 0"

# Start again: the reading was on disk before the screen said 'saved'.
start_app
wait_for "Open visits"
keys r
wait_for "5 readings"
keys C-q
wait_for "EXITED 0"

echo "tmux_smoke: OK (typo refused, reading saved and found again after a restart)"
