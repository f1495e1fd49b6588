# Shell functions the benchmark scripts share (sourced by throughput.sh and batch.sh; they set $work first).

# Peak resident memory of one command in KiB: /usr/bin/time -v when it is installed, else /proc/PID/status VmHWM
# sampled while the process runs (a lower bound).
peak_kib() {
    if [[ -x /usr/bin/time ]]; then
        /usr/bin/time -v "$@" >/dev/null 2>"$work/time.txt" || true
        awk -F: '/Maximum resident set size/ {gsub(/ /, "", $2); print $2}' "$work/time.txt"
    else
        "$@" >/dev/null 2>&1 &
        local pid=$! peak=0 v
        while kill -0 "$pid" 2>/dev/null; do
            v=$(awk '/VmHWM/ {print $2}' "/proc/$pid/status" 2>/dev/null || echo 0)
            (( ${v:-0} > peak )) && peak=$v
            sleep 0.01
        done
        wait "$pid" || true
        echo "$peak"
    fi
}
