#!/usr/bin/env bash
# The every-point walk of issue 10 in a real terminal: for every machine fieldkit knows (the demo
# profiles and one built from each circuit template) open a visit in `fieldkit` inside tmux, go
# through every test point with the arrow keys and type six things at each (a typical value, the
# same in another unit system, a value past the gauge, a wrong kind, garbage, an extreme number),
# checking each time that the screen saved, asked or refused as it should and never closed.
#
#   tests/tmux_walk.sh                     # uses `python -m fieldkit`; PYTHON=... to choose another
#   tests/tmux_walk.sh tarnhollow-fellborer template-motor     # only these machines
#
# Exits non-zero (and prints the screen) at the first wrong answer; prints the counts at the end.
set -euo pipefail
# The tmux server keeps the environment of whoever started it: PYTHONPATH is passed on explicitly
# so the session runs this checkout's fieldkit.

PYTHON=${PYTHON:-python}
HERE=$(cd "$(dirname "$0")" && pwd)
command -v tmux >/dev/null || { echo "tmux_walk: tmux is not installed" >&2; exit 2; }

WORK=$(mktemp -d)
SESSION="fieldkit-walk-$$"
export FIELDKIT_HOME="$WORK/home"
cleanup() { tmux kill-session -t "$SESSION" 2>/dev/null || true; rm -rf "$WORK"; }
trap cleanup EXIT

"$PYTHON" "$HERE/tmux_walk_plan.py" "$WORK"
machines=("$@")
[ ${#machines[@]} -gt 0 ] || mapfile -t machines < <(cut -f1 "$WORK/plan.tsv" | uniq)

screen() { tmux capture-pane -p -t "$SESSION"; }
keys() { tmux send-keys -t "$SESSION" "$@"; }
fail() {
    echo "tmux_walk: FAILED: $1" >&2
    echo "----- screen -----" >&2
    screen >&2
    exit 1
}
wait_for() {  # wait_for REGEX [SECONDS]
    local i
    for ((i = 0; i < ${2:-30} * 10; i++)); do
        if screen | grep -qE -- "$1"; then return 0; fi
        sleep 0.1
    done
    fail "waiting for /$1/"
}
clear_field() {  # backspaces, not ctrl+u: keys typed right after ctrl+u were seen to be lost
    local bs=() i
    for ((i = 0; i < 70; i++)); do bs+=(BSpace); done
    screen | grep -qE "▕ e\.g\. " && return 0  # already empty: its placeholder shows
    keys End "${bs[@]}"
    wait_for "▕ e\.g\. " 20
}
current_point() {  # the step panel's heading ends with the point's id (on a line of its own when a long label wraps)
    screen | grep -oE "▕ ([^▕▏]*  )?[a-z0-9_-]+\.[a-z0-9_-]+ *▏" | head -1 | grep -oE "[a-z0-9_-]+\.[a-z0-9_-]+ *▏" | tr -d " ▏"
}

points=0 inputs=0 saved=0 asked=0 refused=0
for machine in "${machines[@]}"; do
    tmux kill-session -t "$SESSION" 2>/dev/null || true
    tmux new-session -d -s "$SESSION" -x 160 -y 50 \
        "FIELDKIT_HOME='$FIELDKIT_HOME' PYTHONPATH='${PYTHONPATH:-}' TERM=xterm-256color '$PYTHON' -m fieldkit --store '$WORK/$machine.sqlite3' \
         --profiles '$WORK/profiles'; echo \"EXITED \$?\"; sleep 120"
    wait_for "Open visits"
    keys r
    wait_for "NEXT|no further test"
    sleep 1  # the plan's cursor wraps round: Down from wherever it starts, until a point comes back
    seen=" "
    while true; do
        sleep 0.3
        point=$(current_point) || fail "no test point id on the screen"
        case "$seen" in *" $point "*) break ;; esac
        seen="$seen$point "
        points=$((points + 1))
        while IFS=$'\t' read -r _m _p what text expect; do
            [ -z "${WALK_VERBOSE:-}" ] || echo "  $point: $what '$text'" >&2
            clear_field
            tmux send-keys -t "$SESSION" -l -- "$text"
            for ((i = 0; i < 100; i++)); do  # Enter once the field shows what was typed
                screen | grep -qF -- "▕ $text " && break
                sleep 0.1
            done
            keys Enter
            sleep 0.2
            wait_for "saved|Save this value\?|Which value\?|nothing saved|unexpected problem|EXITED" 20
            # The line may still be the previous one (a 'saved' of the last value, or the refusal
            # shown while typing): give a loaded machine time to show this value's own answer.
            for ((i = 0; i < 40; i++)); do
                # the screen, then the step panel's text joined up: a long point label wraps the
                # answer ("(nothing" / "saved)") over two lines of the panel
                scr=$(screen; screen | grep -oE "▕[^▕▏]*▏" | tr -d "▕▏" | tr "\n" " " | tr -s " ")
                grep -qF "saved $text" <<<"$scr" && break
                grep -qE "value\?|unexpected problem|EXITED" <<<"$scr" && break
                [ "$expect" = error ] && grep -qF "nothing saved" <<<"$scr" && break
                sleep 0.1
            done
            inputs=$((inputs + 1))
            if grep -qE "unexpected problem|EXITED|Traceback" <<<"$scr"; then
                fail "$what '$text' at $point ($machine): the app met an error"
            elif grep -qE "Save this value\?|Which value\?" <<<"$scr"; then
                got=ask asked=$((asked + 1))
                keys Escape
                wait_for "Not saved" 10
            elif grep -qF "saved $text" <<<"$scr"; then
                got=ok saved=$((saved + 1))
            elif grep -qF "nothing saved" <<<"$scr"; then
                got=error refused=$((refused + 1))
            else
                fail "$what '$text' at $point ($machine): no answer on the screen"
            fi
            [[ "|$expect|" == *"|$got|"* ]] || fail "$what '$text' at $point ($machine): $got, expected $expect"
        done < <(awk -F'\t' -v m="$machine" -v p="$point" '$1 == m && $2 == p' "$WORK/plan.tsv")
        clear_field
        keys Down
        for ((i = 0; i < 100; i++)); do  # a loaded machine may take a while to show the next point
            sleep 0.1
            [ "$(current_point)" != "$point" ] && break
        done
    done
    # ↓ goes round from the last point to the first: every point of the machine must have come up,
    # those above the one the visit opened on too.
    walked=0
    for p in $(awk -F'\t' -v m="$machine" '$1 == m {print $2}' "$WORK/plan.tsv" | uniq); do
        case "$seen" in *" $p "*) walked=$((walked + 1)) ;; *) fail "$p ($machine) was never reached with Down" ;; esac
    done
    keys C-q
    wait_for "EXITED 0" 20
    echo "tmux_walk: $machine walked, all $walked points"
done
echo "tmux_walk: OK: $points points, $inputs inputs typed ($saved saved, $asked asked, $refused refused); the app never closed"
