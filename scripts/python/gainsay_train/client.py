"""A client for `gainsay serve`, standard library only."""
from __future__ import annotations

import json
import urllib.error
import urllib.request


class GainsayBusy(RuntimeError):
    """The service's queue is full (HTTP 503); retry after a short wait."""


class GainsayClient:
    def __init__(self, url: str = "http://127.0.0.1:8734", timeout: float = 60.0):
        self.url = url.rstrip("/")
        self.timeout = timeout

    def health(self) -> dict:
        with urllib.request.urlopen(self.url + "/healthz", timeout=self.timeout) as r:
            return json.load(r)

    def check(self, profile: dict, replies: list[dict], threshold: float | None = None) -> list[dict]:
        """Score replies ({"id", "text"}) against a profile ({"character", "facts": [{"id", "text"}]});
        returns one record per reply, as `gainsay check` writes them."""
        body = {"profile": profile, "replies": replies}
        if threshold is not None:
            body["threshold"] = threshold
        req = urllib.request.Request(self.url + "/v1/check", data=json.dumps(body).encode("utf-8"),
                                     headers={"Content-Type": "application/json"}, method="POST")
        try:
            with urllib.request.urlopen(req, timeout=self.timeout) as r:
                return json.load(r)["records"]
        except urllib.error.HTTPError as e:
            detail = e.read().decode("utf-8", "replace")
            if e.code == 503:
                raise GainsayBusy(detail) from None
            raise RuntimeError(f"gainsay serve: HTTP {e.code}: {detail}") from None
