# Sourced by the bench scripts. `fastest CMD...` prints the seconds of the
# fastest of $runs runs of CMD (wall time; these machines are shared, so
# the fastest run is the one least disturbed).
fastest() {
    local best=""
    for _ in $(seq "$runs"); do
        local start end
        start=$(date +%s.%N)
        "$@"
        end=$(date +%s.%N)
        best=$(awk -v a="$start" -v b="$end" -v c="$best" \
            'BEGIN {t = b - a; print (c == "" || t < c) ? t : c}')
    done
    echo "$best"
}
