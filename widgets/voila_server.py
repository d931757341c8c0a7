"""What runs inside the Voilà server's own process (`widgets/serve.py` starts it): Voilà with the Host header
check back on and the token taken from the environment (`run_voila`), the kernel websocket with TCP_NODELAY
(`NoDelayWebsocketConnection`: without it every second message of a quick pair waits for a delayed ACK, about
40 ms per round trip), and the kernel manager with a cap on the sessions (`CappedKernelManager`)."""
from __future__ import annotations

import os

MAX_SESSIONS = 8  # kernels at once; about 290 MB each
ENV_TOKEN = "CORDMAP_SERVE_TOKEN"  # the token reaches the server here; `run_voila` takes it out of the environment

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

try:
    from jupyter_server.services.kernels.kernelmanager import AsyncMappingKernelManager
except ImportError:
    AsyncMappingKernelManager = None

if AsyncMappingKernelManager is not None:
    from tornado import web
    from traitlets import Integer

    class CappedKernelManager(AsyncMappingKernelManager):
        """Jupyter server's kernel manager with a cap on the kernels alive at once: past it, a page load gets
        HTTP 503 and the cordmap template's page that says the dashboard is full."""

        max_kernels = Integer(MAX_SESSIONS, config=True, help="kernels (dashboard sessions) alive at once")

        async def start_kernel(self, **kwargs):
            if kwargs.get("kernel_id") is None and len(self.list_kernel_ids()) >= self.max_kernels:
                raise web.HTTPError(503, f"all {self.max_kernels} dashboard sessions of this server are in use",
                                    reason="Dashboard full")
            return await super().start_kernel(**kwargs)
else:
    CappedKernelManager = None


def run_voila() -> None:
    """The Voilà server (run by `VOILA_LAUNCHER` in the server process): Voilà with Jupyter server's Host header
    check switched back on (Voilà turns it off with ``allow_remote_access=True``) and the token taken out of the
    environment once read, so kernels do not inherit it."""
    from voila.app import Voila

    class CordmapVoila(Voila):
        def init_settings(self):
            secret = os.environ.pop(ENV_TOKEN, "")
            if secret:
                self.token = secret
            settings = super().init_settings()
            settings["allow_remote_access"] = False
            settings["local_hostnames"] = ["localhost"]
            return settings

    CordmapVoila.launch_instance()
