"""Report templates: loading, checking, and filling their wording safely.

A template is a TOML file (``report_templates/<name>.toml``; see the
README there) that chooses the sections of a report, their order, their
headings and the wording of the generated narrative. Wording holds
placeholders such as ``{completion}`` that are filled from the analyses'
results by :func:`fill`, a restricted form of :meth:`str.format`: a
placeholder is a plain name from the section's list (no attribute or index
access, no conversion), with at most a short alignment / sign / width
specification. Nothing in a template is ever evaluated as code.
"""

from __future__ import annotations

import re
import string
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from xml.sax.saxutils import escape

from forensic.core.errors import TemplateError
from forensic.core.model import frozen_mapping

from .specs import SPECS

__all__ = [
    "FORMAT",
    "Section",
    "Template",
    "builtin_templates",
    "fill",
    "load_template",
    "placeholders",
    "templates_folder",
]

FORMAT = "forensic-report-template/1"

# A width of at most two digits keeps a placeholder from asking for a huge string.
_SPEC = re.compile(r"^[<>^]?[+\- ]?\d{0,2},?(\.\d)?[dfs]?$")
_NAME = re.compile(r"^[a-z][a-z0-9_]*$")

_SETTINGS: dict[str, tuple[type, Any]] = {
    "key_milestones": (list, []),
    "milestone_limit": (int, 4),
    "float_bands": (list, [0, 1, 6, 21]),
    "numbered_headings": (bool, True),
}


@dataclass(frozen=True, slots=True)
class Section:
    """One section of a template: its kind, heading, wording, options and column headers."""

    number: int
    kind: str
    heading: str
    texts: Mapping[str, str]
    options: Mapping[str, Any]
    columns: Mapping[str, str]

    def text(self, key: str) -> str | None:
        return self.texts.get(key)


@dataclass(frozen=True, slots=True)
class Template:
    """A checked template: title, settings, and its sections in order."""

    name: str
    path: Path
    title: str
    description: str
    settings: Mapping[str, Any]
    sections: tuple[Section, ...]

    def kinds(self) -> tuple[str, ...]:
        return tuple(s.kind for s in self.sections)


def templates_folder() -> Path:
    """The shipped templates: the package's copy, or ``report_templates/`` of a source tree.

    See :mod:`forensic.casefile.shipped`; when neither exists the source tree's
    (missing) folder is returned, so that no template is found by name.
    """
    from forensic.casefile.shipped import shipped

    folder = shipped("report_templates")
    return folder if folder is not None else Path(__file__).resolve().parent.parent.parent / "report_templates"


def builtin_templates() -> tuple[str, ...]:
    """Names of the templates shipped with the package (``report_templates/`` in a source tree)."""
    folder = templates_folder()
    return tuple(sorted(p.stem for p in folder.glob("*.toml"))) if folder.is_dir() else ()


def placeholders(text: str, where: str = "") -> tuple[str, ...]:
    """The placeholder names used in ``text``; :class:`TemplateError` for a forbidden form."""
    names = []
    try:
        parsed = list(string.Formatter().parse(text))
    except ValueError as exc:
        msg = f"{where}: {exc} (write a literal brace as {{{{ or }}}})"
        raise TemplateError(msg) from None
    for _literal, name, spec, conversion in parsed:
        if name is None:
            continue
        if not _NAME.match(name):
            msg = (
                f"{where}: placeholder {{{name}}} is not a plain name; use lower-case letters, "
                "digits and underscores (no dots, brackets or positions)"
            )
            raise TemplateError(msg)
        if conversion is not None:
            msg = f"{where}: placeholder {{{name}!{conversion}}} uses a conversion, which templates do not allow"
            raise TemplateError(msg)
        if spec and not _SPEC.match(spec):
            msg = f"{where}: placeholder {{{name}:{spec}}} has an unsupported format (e.g. {{days:+d}} or {{name:<12}})"
            raise TemplateError(msg)
        names.append(name)
    return tuple(names)


def fill(text: str, fields: Mapping[str, Any], where: str = "") -> str:
    """Fill ``text``'s placeholders from ``fields`` and return Paragraph markup.

    Both the template's own words and the values are escaped
    (:func:`xml.sax.saxutils.escape`), so ``<``, ``&`` and markup-like text
    print as written.
    """
    out = []
    for literal, name, spec, _conv in string.Formatter().parse(text):
        out.append(escape(literal))
        if name is None:
            continue
        try:
            value = fields[name]
        except KeyError:
            known = ", ".join(sorted(fields))
            msg = f"{where}: unknown placeholder {{{name}}} (known here: {known})"
            raise TemplateError(msg) from None
        try:
            shown = format(value, spec or "")
        except (TypeError, ValueError):
            msg = f"{where}: placeholder {{{name}:{spec}}} cannot format the value {value!r}"
            raise TemplateError(msg) from None
        out.append(escape(shown))
    return "".join(out)


def _resolve(name_or_path: str | Path) -> Path:
    p = Path(name_or_path)
    if p.suffix == ".toml" or p.exists():
        if not p.is_file():
            msg = f"{p}: no such template file"
            raise TemplateError(msg)
        return p
    candidate = templates_folder() / f"{name_or_path}.toml"
    if not candidate.is_file():
        known = ", ".join(builtin_templates()) or "none"
        msg = f"no report template named {str(name_or_path)!r} (known: {known}; or give a path to a .toml file)"
        raise TemplateError(msg)
    return candidate


def _check_type(value: Any, want: type, where: str) -> Any:
    ok = isinstance(value, want) and not (want is int and isinstance(value, bool))
    if not ok:
        msg = f"{where}: expected {want.__name__}, got {type(value).__name__} {value!r}"
        raise TemplateError(msg)
    return value


def _section(number: int, raw: Any, file: str) -> Section:
    where = f"{file}, section {number}"
    if not isinstance(raw, dict):
        msg = f"{where}: each [[section]] must be a table"
        raise TemplateError(msg)
    kind = raw.get("kind")
    if kind not in SPECS:
        msg = f"{where}: kind {kind!r} is not a section kind (known: {', '.join(sorted(SPECS))})"
        raise TemplateError(msg)
    spec = SPECS[kind]
    where = f"{file}, section {number} ({kind})"
    heading = raw.get("heading")
    if not isinstance(heading, str) or not heading.strip():
        msg = f"{where}: 'heading' is required (the section's title, as text)"
        raise TemplateError(msg)
    texts = raw.get("text", {})
    if not isinstance(texts, dict):
        msg = f"{where}: [section.text] must be a table of wording keys"
        raise TemplateError(msg)
    allowed = {**spec.optional_texts, **spec.texts}
    for key, value in texts.items():
        if key not in allowed:
            msg = f"{where}: text.{key} is not a wording key of this kind (known: {', '.join(sorted(allowed))})"
            raise TemplateError(msg)
        _check_type(value, str, f"{where}, text.{key}")
        for name in placeholders(value, f"{where}, text.{key}"):
            if name not in allowed[key]:
                msg = (
                    f"{where}, text.{key}: unknown placeholder {{{name}}} "
                    f"(known here: {', '.join(sorted(set(allowed[key])))})"
                )
                raise TemplateError(msg)
    for key in spec.texts:
        if key not in texts:
            msg = (
                f"{where}: text.{key} is required; its placeholders are "
                f"{', '.join('{' + f + '}' for f in sorted(set(spec.texts[key])))}"
            )
            raise TemplateError(msg)
    options = {}
    for key, value in raw.items():
        if key in ("kind", "heading", "text", "columns"):
            continue
        if key not in spec.options:
            known = ", ".join(sorted(spec.options)) or "none"
            msg = f"{where}: {key!r} is not an option of this kind (options: {known})"
            raise TemplateError(msg)
        opt = spec.options[key]
        _check_type(value, opt.type, f"{where}, {key}")
        if opt.choices and value not in opt.choices:
            msg = f"{where}, {key}: {value!r} is not one of {', '.join(opt.choices)}"
            raise TemplateError(msg)
        options[key] = value
    for key, opt in spec.options.items():
        options.setdefault(key, opt.default)
    columns = raw.get("columns", {})
    if not isinstance(columns, dict) or not all(isinstance(v, str) for v in columns.values()):
        msg = f"{where}: [section.columns] must map column keys to header text"
        raise TemplateError(msg)
    return Section(number, kind, heading.strip(), frozen_mapping(texts), frozen_mapping(options), frozen_mapping(columns))


def load_template(name_or_path: str | Path) -> Template:
    """Load and check a template by name (``report_templates/<name>.toml``) or by path.

    Raises
    ------
    TemplateError
        Naming the file, the section and the key or placeholder at fault.
    """
    path = _resolve(name_or_path)
    file = str(path)
    try:
        raw = tomllib.loads(path.read_text(encoding="utf-8-sig"))
    except (OSError, UnicodeDecodeError) as exc:
        msg = f"{file}: cannot read the template ({exc})"
        raise TemplateError(msg) from None
    except tomllib.TOMLDecodeError as exc:
        msg = f"{file}: not valid TOML ({exc})"
        raise TemplateError(msg) from None
    except RecursionError:  # arrays or tables nested thousands deep: hostile, not a template
        msg = f"{file}: not valid TOML (nested too deeply)"
        raise TemplateError(msg) from None
    except ValueError as exc:  # an integer of over 4,300 digits (Python's int-string limit)
        msg = f"{file}: not valid TOML (a value cannot be read: {exc})"
        raise TemplateError(msg) from None
    if raw.get("format") != FORMAT:
        msg = f"{file}: format must be {FORMAT!r} (value: {raw.get('format')!r})"
        raise TemplateError(msg)
    title = raw.get("title")
    if not isinstance(title, str) or not title.strip():
        msg = f"{file}: 'title' is required (the report's title, as text)"
        raise TemplateError(msg)
    description = raw.get("description", "")
    _check_type(description, str, f"{file}, description")
    settings_raw = raw.get("settings", {})
    if not isinstance(settings_raw, dict):
        msg = f"{file}: [settings] must be a table"
        raise TemplateError(msg)
    settings = {}
    for key, value in settings_raw.items():
        if key not in _SETTINGS:
            msg = f"{file}, settings.{key}: not a setting (known: {', '.join(sorted(_SETTINGS))})"
            raise TemplateError(msg)
        settings[key] = _check_type(value, _SETTINGS[key][0], f"{file}, settings.{key}")
    for key, (_t, default) in _SETTINGS.items():
        settings.setdefault(key, default)
    if not all(isinstance(v, str) for v in settings["key_milestones"]):
        msg = f"{file}, settings.key_milestones: expected a list of activity ids (text)"
        raise TemplateError(msg)
    bands = settings["float_bands"]
    if not all(isinstance(v, int) and not isinstance(v, bool) for v in bands) or list(bands) != sorted(set(bands)):
        msg = f"{file}, settings.float_bands: expected increasing whole numbers of working days (value: {bands!r})"
        raise TemplateError(msg)
    sections_raw = raw.get("section")
    if not isinstance(sections_raw, list) or not sections_raw:
        msg = f"{file}: a template needs at least one [[section]]"
        raise TemplateError(msg)
    unknown = set(raw) - {"format", "name", "title", "description", "settings", "section"}
    if unknown:
        msg = f"{file}: unknown top-level key(s) {', '.join(sorted(unknown))}"
        raise TemplateError(msg)
    sections = tuple(_section(i, s, file) for i, s in enumerate(sections_raw, start=1))
    name = raw.get("name", path.stem)
    _check_type(name, str, f"{file}, name")
    return Template(name, path, title.strip(), description, frozen_mapping(settings), sections)
