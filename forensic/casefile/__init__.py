"""The casefile folder: reading it into the model, checking it, writing it.

``csvread`` reads a CSV table safely; ``records`` turns its rows into
activities, links and events and checks the logic for loops;
``manifest`` checks ``casefile.toml``; ``fragnets`` reads the fragnet
folders; ``reading`` loads a whole folder (``load_casefile``) within the
``limits``; ``validation`` schedules every snapshot (``forensic check``);
``writing`` is the inverse of reading; ``outputs`` writes any file
atomically and refuses to write over a casefile's inputs (writing a
casefile needs it, and imports only point down, so it lives here rather
than with the exchange formats); ``synthetic`` and ``demo`` make and copy
casefiles; ``shipped`` finds the files shipped with the package. The
format itself is documented in ``casefiles/README.md``.
"""

from forensic.core.faces import lazy_face

__all__ = ["FORMAT", "Limits", "MANIFEST", "ValidationResult", "atomic_write", "copy_demo", "demo_source", "generate_casefile", "load_casefile", "validate_casefile", "write_casefile", "write_new_casefile"]

__getattr__, __dir__ = lazy_face(__name__, {
    "FORMAT": ".manifest",
    "Limits": ".limits",
    "MANIFEST": ".manifest",
    "ValidationResult": ".validation",
    "atomic_write": ".outputs",
    "copy_demo": ".demo",
    "demo_source": ".demo",
    "generate_casefile": ".synthetic",
    "load_casefile": ".reading",
    "validate_casefile": ".validation",
    "write_casefile": ".writing",
    "write_new_casefile": ".writing",
})
