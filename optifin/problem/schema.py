"""The JSON Schema (draft 2020-12) of problem files, generated from the format tree.

The schema serves editors (completion, inline errors) and other tools; it is generated from
the same declaration the loader validates with (:data:`optifin.problem.format.PROBLEM`), so
the two cannot drift. It checks the structure, types, units' shape and the choices; the
checks across fields (ranges against the envelope, limits against the ambient, ...) are the
loader's alone. Library keys are those of the bundled library: a material or process that a
file defines under ``materials:``/``processes:`` passes the loader but not this schema.
"""

from __future__ import annotations

import json

from optifin.problem.format import PROBLEM

SCHEMA_DIALECT = "https://json-schema.org/draft/2020-12/schema"
SCHEMA_ID = "urn:optifin:problem-schema"


def problem_schema() -> dict:
    """The JSON Schema of the problem-file format, with the bundled library's keys."""
    from optifin.problem.loader import bundled_library

    lib = bundled_library()
    choices = {
        "material": lib.material_keys,
        "process": lib.process_keys,
        "finish": lib.finishes,
    }
    return {
        "$schema": SCHEMA_DIALECT,
        "$id": SCHEMA_ID,
        "title": "optifin problem file",
        **PROBLEM.schema(choices),
    }


def problem_schema_json(indent: int = 2) -> str:
    """:func:`problem_schema` as JSON text (for ``optifin schema > problem.schema.json``)."""
    return json.dumps(problem_schema(), indent=indent) + "\n"
