"""JSON Schemas of the record files, generated from the pydantic models.

`python -m trapbook.schema_files` rewrites schemas/; a test fails when the committed
files differ from what the models say, so the published format cannot drift.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

from .records import Run, Screen

SCHEMAS = {"run.schema.json": Run, "screen.schema.json": Screen}


def generate() -> dict[str, dict]:
    out = {}
    for filename, model in SCHEMAS.items():
        schema = model.model_json_schema(mode="validation")
        schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
        schema["$id"] = f"trapbook/{filename}"
        out[filename] = schema
    return out


def render(schema: dict) -> str:
    return json.dumps(schema, indent=2, ensure_ascii=False, sort_keys=True) + "\n"


def write(folder: Path) -> list[Path]:
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for filename, schema in generate().items():
        p = folder / filename
        p.write_text(render(schema), encoding="utf-8")
        paths.append(p)
    return paths


if __name__ == "__main__":  # pragma: no cover
    target = Path(sys.argv[1]) if len(sys.argv) > 1 else Path(__file__).resolve().parents[2] / "schemas"
    for p in write(target):
        print(p)
