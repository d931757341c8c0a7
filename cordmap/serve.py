"""`cordmap serve`: the Voilà dashboard on 127.0.0.1.

The findings file reaches the notebook through the environment variable ``CORDMAP_FINDINGS``. The kernel
websocket sets TCP_NODELAY (`NoDelayWebsocketConnection`): without it every second message of a quick pair waits
for a delayed ACK, about 40 ms per round trip.
"""
from __future__ import annotations

import os
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from .cautions import BANNER
from .errors import CordmapError

ENV_FINDINGS = "CORDMAP_FINDINGS"
DEFAULT_PORT = 8866
IOPUB_TIMEOUT = 60  # seconds
NOTEBOOK = Path(__file__).resolve().parent.parent / "dashboards" / "cordmap.ipynb"
NOTEBOOK_TEXT = """{"cells": [{"cell_type": "code", "execution_count": null, "id": "cell-0", "metadata": {},
 "outputs": [], "source": ["import widgets\\n", "app = widgets.dashboard()\\n", "app.widget"]}],
 "metadata": {"kernelspec": {"display_name": "Python 3", "language": "python", "name": "python3"}},
 "nbformat": 4, "nbformat_minor": 5}
"""

try:
    from jupyter_server.services.kernels.connection.channels import ZMQChannelsWebsocketConnection
except ImportError:  # the [app] extra is not installed; serve() says so
    ZMQChannelsWebsocketConnection = None

if ZMQChannelsWebsocketConnection is not None:
    class NoDelayWebsocketConnection(ZMQChannelsWebsocketConnection):
        """The stock kernel websocket with Nagle's algorithm switched off."""

        def connect(self):
            try:
                self.websocket_handler.set_nodelay(True)
            except Exception:  # noqa: BLE001 - an older server without the handler: keep the stock behaviour
                pass
            return super().connect()
else:
    NoDelayWebsocketConnection = None

CONNECTION_CLASS = "cordmap.serve.NoDelayWebsocketConnection"
TEMPLATE = "cordmap"  # widgets/share/voila/templates/cordmap: the lab page without outside CDN links


def _template_share() -> str | None:
    try:
        import widgets
    except ImportError:
        return None
    share = Path(widgets.__file__).resolve().parent / "share"
    return str(share) if (share / "voila" / "templates" / TEMPLATE).is_dir() else None


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


def notebook_path(workdir: str | os.PathLike) -> Path:
    """The dashboard notebook: the repository's copy, else a minimal one written into `workdir`."""
    if NOTEBOOK.exists():
        return NOTEBOOK
    path = Path(workdir) / "cordmap.ipynb"
    path.write_text(NOTEBOOK_TEXT, encoding="utf-8")
    return path


# Voila run as `python -m voila`, except that the optional IRI checker of jsonschema (the rfc3987_syntax package,
# pulled in through jupyter_events) is kept out: it builds a grammar at import that took 1.4 s of the server's
# 2.4 s start here (python -X importtime), and the server validates no IRI-format fields. jsonschema skips a
# format checker whose package is missing.
VOILA_LAUNCHER = ("import runpy, sys; sys.modules.setdefault('rfc3987_syntax', None); "
                  "runpy.run_module('voila', run_name='__main__', alter_sys=True)")


def voila_command(port: int, notebook: Path, connection_dir: str, host: str = "127.0.0.1") -> list[str]:
    template = [f"--template={TEMPLATE}"] if _template_share() else []
    return [sys.executable, "-c", VOILA_LAUNCHER, str(notebook), "--no-browser", f"--port={port}", f"--Voila.ip={host}",
            *template,
            f"--Voila.connection_dir_root={connection_dir}", "--show_tracebacks=True",
            # the app's thousand widget messages can trail the cell's reply by more than nbclient's default 4 s
            # when several sessions start at once on two cores; past that timeout the page comes up empty
            f"--VoilaExecutor.iopub_timeout={IOPUB_TIMEOUT}",
            f"--Voila.kernel_websocket_connection_class={CONNECTION_CLASS}"]


def server_env(findings: str | os.PathLike | None = None) -> dict[str, str]:
    """The server's environment: no inherited MPLBACKEND (it reaches the kernel), the findings path if any."""
    env = {k: v for k, v in os.environ.items() if k != "MPLBACKEND"}
    env.pop(ENV_FINDINGS, None)
    if findings is not None:
        env[ENV_FINDINGS] = str(Path(findings).resolve())
    root = str(Path(__file__).resolve().parent.parent)  # so the kernel imports this cordmap and widgets
    share = _template_share()
    if share:
        env["JUPYTER_PATH"] = os.pathsep.join(p for p in (share, env.get("JUPYTER_PATH", "")) if p)
    env["PYTHONPATH"] = os.pathsep.join(p for p in (root, env.get("PYTHONPATH", "")) if p)
    return env


def start(port: int, findings=None, host: str = "127.0.0.1", connection_dir: str | None = None,
          stdout=None, stderr=None) -> tuple[subprocess.Popen, str]:
    """Start Voilà in its own process group; returns (process, connection dir)."""
    cdir = connection_dir or tempfile.mkdtemp(prefix="cordmap-voila-")
    cmd = voila_command(port, notebook_path(cdir), cdir, host)
    proc = subprocess.Popen(cmd, env=server_env(findings), start_new_session=True, stdout=stdout, stderr=stderr)
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


def serve(port: int | None = None, findings=None, host: str = "127.0.0.1") -> int:
    """Serve the dashboard until Ctrl-C; returns an exit code (0 ok, 2 bad input, 1 server failure)."""
    if NoDelayWebsocketConnection is None or not _has_voila():
        print("cordmap serve: Voila is not installed; pip install 'cordmap[app]'", file=sys.stderr)
        return 2
    if findings is not None:
        from .findings import parse

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
    url = f"http://{host}:{port}/"
    print(f"cordmap dashboard starting at {url}", flush=True)
    _stop_on_sigterm()
    proc, cdir = start(port, findings, host)
    try:
        if not wait_for_port(port, host, timeout=60, proc=proc):
            print("cordmap serve: the server did not start (see the messages above)", file=sys.stderr)
            stop(proc)
            return 1
        print(f"cordmap dashboard ready: {url}  (Ctrl-C stops it)", flush=True)
        print(BANNER, flush=True)
        return proc.wait() and 1
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
    except ImportError:
        return False
    return True
