"""The fingerprint of what decides a design's figures, so stored results are reused only
when they still hold.

A trial's objectives and constraint values depend on the study (converter, operating
points, inductor, limits, objectives, design-space bounds, model choices, cost,
``[custom_core]``), on the catalogue's content and on the model's code. The fingerprint
hashes all of them; it leaves out only what does not change a figure: the study's name
and title, the strategy and the optuna run settings (trials, seed, sampler, batch size),
the catalogue's path (its content hash stands for it) and the currency label. A key a
later version adds to the study counts automatically. A point's current-waveform file
counts by its content hash.
"""

from __future__ import annotations

import hashlib
import json
from typing import Any

from optimag import __version__

#: Study keys (section, key) that change no figure of any design.
IGNORED_KEYS = frozenset({
    ("study", "name"), ("study", "title"),
    ("search", "strategy"), ("search", "trials"), ("search", "seed"),
    ("search", "sampler"), ("search", "batch_size"),
    ("catalog", "path"), ("cost", "currency"),
})

#: Raised when the way the fingerprint is formed changes.
FINGERPRINT_SCHEME = 1


def fingerprint_content(study, catalog) -> dict[str, Any]:
    """The study content, catalogue hash and model version the fingerprint hashes."""
    dumped = study.model_dump(mode="json")
    content = {}
    for section, value in sorted(dumped.items()):
        if isinstance(value, dict):
            value = {k: v for k, v in value.items() if (section, k) not in IGNORED_KEYS}
        content[section] = value
    out = {
        "scheme": FINGERPRINT_SCHEME,
        "optimag_version": __version__,
        "catalog_hash": str(catalog.content_hash),
        "study": content,
    }
    # A current-waveform file decides its point's figures by its content, not its name.
    waveforms = {}
    for point in getattr(study, "operating_points", ()):
        if getattr(point, "current_waveform", None):
            try:
                data = study.waveform_path(point).read_bytes()
            except OSError:
                data = b""
            waveforms[point.name] = hashlib.sha256(data).hexdigest()
    if waveforms:
        out["waveform_hashes"] = waveforms
    return out


def study_fingerprint(study, catalog) -> str:
    """SHA-256 (hex) of `fingerprint_content`: equal fingerprints, equal figures."""
    text = json.dumps(fingerprint_content(study, catalog), sort_keys=True,
                      separators=(",", ":"), default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def fingerprint_changes(old: dict[str, Any] | None, new: dict[str, Any]) -> list[str]:
    """Human-readable list of what differs between two `fingerprint_content` values
    (``section.key``, ``catalogue``, ``optimag version``)."""
    if not old:
        return ["no fingerprint was stored"]
    changes = []
    if old.get("catalog_hash") != new.get("catalog_hash"):
        changes.append("the catalogue")
    if old.get("waveform_hashes") != new.get("waveform_hashes"):
        changes.append("a current-waveform file")
    if old.get("optimag_version") != new.get("optimag_version") or \
            old.get("scheme") != new.get("scheme"):
        changes.append("the optimag version")
    old_study, new_study = old.get("study", {}), new.get("study", {})
    for section in sorted(set(old_study) | set(new_study)):
        a, b = old_study.get(section), new_study.get(section)
        if a == b:
            continue
        if isinstance(a, dict) and isinstance(b, dict):
            changes.extend(f"{section}.{k}" for k in sorted(set(a) | set(b))
                           if a.get(k) != b.get(k))
        else:
            changes.append(f"[{section}]")
    return changes or ["the study"]
