"""`cordmap serve`: the Voilà dashboard on 127.0.0.1 (the front end's launcher: the core never imports it; the
command imports it when run).

The page is the one dashboard notebook, `widgets/share/cordmap.ipynb`: package data, so a checkout and an
installed copy serve the same page (`dashboards/cordmap.ipynb` is a link to it). The findings file reaches the
notebook through the environment variable ``CORDMAP_FINDINGS``. What runs inside the server's own process (the
kernel websocket with TCP_NODELAY, the session cap, Voilà with the Host check) is `widgets/voila_server.py`.

Bounded and closed by default (each page load starts a kernel of about 290 MB):

* a closed tab's kernel is shut down by the page itself (Voilà's own ``beforeunload`` call) and, when that call
  never arrives, by Jupyter server's culler: a kernel with no open tab and no activity for ``idle_timeout``
  seconds is shut down (``MappingKernelManager.cull_idle_timeout``, ``cull_interval``; ``cull_connected`` stays
  False, so an open tab keeps its exam however long the clinician is away);
* at most ``max_sessions`` kernels at once (`voila_server.CappedKernelManager`); the next page load gets a page
  that says so (HTTP 503, ``error.html`` of the cordmap template);
* a random token in the address by default (``--no-token`` for a single-user laptop); it reaches the server in
  the environment (``CORDMAP_SERVE_TOKEN``), not on the command line where other users' ``ps`` would show it;
* the Host header is checked (Jupyter server's own check: loopback addresses and ``localhost`` only), against
  DNS rebinding;
* no tracebacks are sent to the page (``show_tracebacks`` off; the app logs them to the server's stderr).
"""
from __future__ import annotations

import os
import secrets
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from cordmap.cautions import BANNER
from cordmap.errors import CordmapError

from .voila_server import ENV_TOKEN, MAX_SESSIONS  # noqa: F401 (the server process' settings; re-exported)

ENV_FINDINGS = "CORDMAP_FINDINGS"
DEFAULT_PORT = 8866
IOPUB_TIMEOUT = 60  # seconds
IDLE_TIMEOUT = 600  # seconds a kernel with no open tab may stay idle before it is shut down
CULL_INTERVAL = 60  # seconds between the culler's rounds
SHARE = Path(__file__).resolve().parent / "share"
NOTEBOOK = SHARE / "cordmap.ipynb"  # package data; dashboards/cordmap.ipynb links here

# what runs inside the Voila server's own process (`widgets/voila_server.py`), named by these dotted paths
CONNECTION_CLASS = "widgets.voila_server.NoDelayWebsocketConnection"
KERNEL_MANAGER_CLASS = "widgets.voila_server.CappedKernelManager"

TEMPLATE = "cordmap"  # widgets/share/voila/templates/cordmap: the lab page without outside CDN links


def _template_share() -> str | None:
    return str(SHARE) if (SHARE / "voila" / "templates" / TEMPLATE).is_dir() else None


def free_port(host: str = "127.0.0.1") -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind((host, 0))
        return s.getsockname()[1]


def port_is_free(port: int, host: str = "127.0.0.1") -> bool:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        try:
            s.bind((host, port))
        except OSError:
            return False
        return True


def wait_for_port(port: int, host: str = "127.0.0.1", timeout: float = 30.0, proc=None) -> bool:
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if proc is not None and proc.poll() is not None:
            return False
        with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
            s.settimeout(0.2)
            if s.connect_ex((host, port)) == 0:
                return True
        time.sleep(0.05)
    return False


def notebook_path() -> Path:
    """The dashboard notebook (package data: the same page from a checkout and from an installed copy)."""
    if not NOTEBOOK.is_file():
        raise CordmapError(f"{NOTEBOOK}: the dashboard notebook is missing; reinstall cordmap[app]")
    return NOTEBOOK


# Voila run as `python -m voila`, except that the optional IRI checker of jsonschema (the rfc3987_syntax package,
# pulled in through jupyter_events) is kept out: it builds a grammar at import that took 1.4 s of the server's
# 2.4 s start here (python -X importtime), and the server validates no IRI-format fields. jsonschema skips a
# format checker whose package is missing.
VOILA_LAUNCHER = ("import sys; sys.modules.setdefault('rfc3987_syntax', None); "
                  "from widgets.voila_server import run_voila; run_voila()")


def voila_command(port: int, notebook: Path, connection_dir: str, host: str = "127.0.0.1",
                  idle_timeout: int = IDLE_TIMEOUT, cull_interval: int = CULL_INTERVAL,
                  max_sessions: int = MAX_SESSIONS) -> list[str]:
    template = [f"--template={TEMPLATE}"] if _template_share() else []
    return [sys.executable, "-c", VOILA_LAUNCHER, str(notebook), "--no-browser", f"--port={port}", f"--Voila.ip={host}",
            *template,
            f"--Voila.connection_dir_root={connection_dir}", "--VoilaConfiguration.show_tracebacks=False",
            f"--VoilaConfiguration.multi_kernel_manager_class={KERNEL_MANAGER_CLASS}",
            f"--CappedKernelManager.max_kernels={max_sessions}",
            f"--MappingKernelManager.cull_idle_timeout={idle_timeout}",
            f"--MappingKernelManager.cull_interval={cull_interval}",
            "--MappingKernelManager.cull_connected=False",
            # the app's thousand widget messages can trail the cell's reply by more than nbclient's default 4 s
            # when several sessions start at once on two cores; past that timeout the page comes up empty
            f"--VoilaExecutor.iopub_timeout={IOPUB_TIMEOUT}",
            f"--Voila.kernel_websocket_connection_class={CONNECTION_CLASS}"]


BLAS_THREADS = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")


def server_env(findings: str | os.PathLike | None = None, token: str = "") -> dict[str, str]:
    """The server's environment: no inherited MPLBACKEND (it reaches the kernel), the findings path if any, the
    token if any (the server drops it from its environment once read)."""
    env = {k: v for k, v in os.environ.items() if k not in ("MPLBACKEND", ENV_TOKEN, ENV_FINDINGS)}
    if token:
        env[ENV_TOKEN] = token
    if findings is not None:
        env[ENV_FINDINGS] = str(Path(findings).resolve())
    share = _template_share()
    if share:
        env["JUPYTER_PATH"] = os.pathsep.join(p for p in (share, env.get("JUPYTER_PATH", "")) if p)
    root = checkout_root()
    if root:  # run from a source checkout: the kernel imports this cordmap and widgets (never site-packages)
        env["PYTHONPATH"] = os.pathsep.join(p for p in (root, env.get("PYTHONPATH", "")) if p)
    # one BLAS thread per kernel (unless the caller chose): every session is a kernel of its own, and on a 2-core
    # machine the thread pools of several kernels fought for the cores (a ranking 1.5-2x slower under load,
    # benchmarks/bench_dashboard.py, issue 16)
    for name in BLAS_THREADS:
        env.setdefault(name, "1")
    return env


def checkout_root() -> str | None:
    """The source checkout this front end runs from (the folder holding pyproject.toml and cordmap/), or None for
    an installed copy, which the kernel imports as the server does."""
    root = Path(__file__).resolve().parent.parent
    return str(root) if (root / "pyproject.toml").is_file() and (root / "cordmap").is_dir() else None


def new_token() -> str:
    return secrets.token_urlsafe(24)


def start(port: int, findings=None, host: str = "127.0.0.1", connection_dir: str | None = None,
          stdout=None, stderr=None, token: str = "", idle_timeout: int = IDLE_TIMEOUT,
          cull_interval: int = CULL_INTERVAL, max_sessions: int = MAX_SESSIONS) -> tuple[subprocess.Popen, str]:
    """Start Voilà in its own process group; returns (process, connection dir). `token` "" serves without one."""
    cdir = connection_dir or tempfile.mkdtemp(prefix="cordmap-voila-")
    cmd = voila_command(port, notebook_path(), cdir, host, idle_timeout=idle_timeout,
                        cull_interval=cull_interval, max_sessions=max_sessions)
    proc = subprocess.Popen(cmd, env=server_env(findings, token), start_new_session=True, stdout=stdout,
                            stderr=stderr)
    return proc, cdir


def stop(proc: subprocess.Popen, timeout: float = 10.0) -> None:
    """SIGTERM (kernels shut down cleanly), then SIGKILL of the process group as the fallback."""
    if proc.poll() is not None:
        return
    try:
        proc.send_signal(signal.SIGTERM)
        proc.wait(timeout=timeout)
    except subprocess.TimeoutExpired:
        try:
            os.killpg(proc.pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
        proc.wait(timeout=5)


def serve(port: int | None = None, findings=None, host: str = "127.0.0.1", token: bool = True,
          idle_timeout: int = IDLE_TIMEOUT, max_sessions: int = MAX_SESSIONS) -> int:
    """Serve the dashboard until Ctrl-C; returns an exit code (0 ok, 2 bad input or a server that would not start)."""
    if not _has_voila():
        print("cordmap serve: Voila is not installed; pip install 'cordmap[app]'", file=sys.stderr)
        return 2
    if findings is not None:
        from cordmap.findings import parse

        try:
            parse(Path(findings))
        except CordmapError as e:
            print(f"cordmap serve: {e}", file=sys.stderr)
            return 2
    if port is None:
        port = DEFAULT_PORT if port_is_free(DEFAULT_PORT, host) else free_port(host)
    elif not 0 < port < 65536:
        print(f"cordmap serve: port {port} is outside 1..65535", file=sys.stderr)
        return 2
    elif not port_is_free(port, host):
        print(f"cordmap serve: port {port} on {host} is in use; pick another with --port", file=sys.stderr)
        return 2
    if not 1 <= max_sessions <= 1000 or not 10 <= idle_timeout <= 7 * 86400:
        print("cordmap serve: --max-sessions must be 1..1000 and --idle-timeout 10..604800 seconds", file=sys.stderr)
        return 2
    secret = new_token() if token else ""
    url = f"http://{host}:{port}/" + (f"?token={secret}" if secret else "")
    print(f"cordmap dashboard starting on {host}:{port}", flush=True)
    _stop_on_sigterm()
    proc, cdir = start(port, findings, host, token=secret, idle_timeout=idle_timeout, max_sessions=max_sessions)
    try:
        if not wait_for_port(port, host, timeout=60, proc=proc):
            print("cordmap serve: the server did not start (see the messages above)", file=sys.stderr)
            stop(proc)
            return 2
        print(f"cordmap dashboard ready: {url}  (Ctrl-C stops it)", flush=True)
        print(f"at most {max_sessions} sessions; a session with no open tab ends after {idle_timeout} s idle",
              flush=True)
        print(BANNER, flush=True)
        return 2 if proc.wait() else 0
    except KeyboardInterrupt:
        stop(proc)
        return 0
    finally:
        stop(proc)
        shutil.rmtree(cdir, ignore_errors=True)


def _interrupt(signum, frame):
    raise KeyboardInterrupt


def _stop_on_sigterm() -> None:
    """SIGTERM stops the server the way Ctrl-C does (so the Voila process group is not left behind)."""
    import threading

    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGTERM, _interrupt)


def _has_voila() -> bool:
    try:
        import voila  # noqa: F401

        from .voila_server import NoDelayWebsocketConnection
    except ImportError:
        return False
    return NoDelayWebsocketConnection is not None
