"""Files bundled with induct (fictional scenarios, planet file, measurements, tracks) and their lookup by name."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

__all__ = ["bundled_files", "resolve_bundled", "bundled_scenarios", "resolve_scenario_path"]


def bundled_files(suffix: str, keep=None) -> dict[str, Path]:
    """Files shipped in ``induct.scenarios`` with the given suffix: name (file stem) -> path.

    ``keep(path)`` may filter them (for example, scenarios only).
    """
    root = resources.files("induct.scenarios")
    out = {}
    for p in root.iterdir():
        if p.name.endswith(suffix) and (keep is None or keep(p)):
            out[p.name[: -len(suffix)]] = Path(str(p))
    return out


def resolve_bundled(name_or_path, suffix: str, what: str, keep=None) -> Path:
    """An existing file, or the name of a bundled file with that suffix (FileNotFoundError listing them)."""
    path = Path(name_or_path)
    if path.is_file():
        return path
    bundled = bundled_files(suffix, keep)
    key = path.name[: -len(suffix)] if path.name.endswith(suffix) else path.name
    if key in bundled and not path.exists():
        return bundled[key]
    raise FileNotFoundError(
        f"{what} {str(name_or_path)!r} not found: give a file or the name of one of the bundled {what}s "
        f"({', '.join(sorted(bundled)) or 'none'})"
    )


def _is_scenario(path) -> bool:
    try:
        text = path.read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError):
        return False
    return any(line.strip() == "[body]" for line in text.splitlines())


def bundled_scenarios() -> dict[str, Path]:
    """Scenarios shipped with induct: name (file stem) -> path.

    Only files with a ``[body]`` table count; the folder also holds planet,
    measurement and trajectory files.
    """
    return bundled_files(".toml", _is_scenario)


def resolve_scenario_path(name_or_path) -> Path:
    """A path to an existing file, or the name of a bundled scenario (e.g. ``"ilmare"``)."""
    return resolve_bundled(name_or_path, ".toml", "scenario", _is_scenario)
