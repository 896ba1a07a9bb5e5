# Sourced by the window scripts: unless $DISPLAY is set, starts a virtual X server on a free
# display number (stopped when the script exits) and selects Mesa's software OpenGL with one
# rasteriser thread, which keeps a core free for the simulation.
xvfb_pid=""
stop_xvfb() { if [[ -n "$xvfb_pid" ]]; then kill "$xvfb_pid" 2>/dev/null || true; fi; }
trap stop_xvfb EXIT
if [[ -z "${DISPLAY:-}" ]]; then
    for n in "$@"; do
        if [[ ! -e /tmp/.X11-unix/X$n && ! -e /tmp/.X$n-lock ]]; then
            Xvfb ":$n" -screen 0 1600x1000x24 -nolisten tcp >/dev/null 2>&1 &
            xvfb_pid=$!
            export DISPLAY=":$n"
            break
        fi
    done
    [[ -n "$xvfb_pid" ]] || { echo "no free X display number for Xvfb" >&2; exit 1; }
    for _ in $(seq 50); do [[ -e "/tmp/.X11-unix/X${DISPLAY#:}" ]] && break; sleep 0.1; done
fi
export LIBGL_ALWAYS_SOFTWARE=1 GALLIUM_DRIVER=llvmpipe LP_NUM_THREADS=1
