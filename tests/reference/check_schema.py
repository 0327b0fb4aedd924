#!/usr/bin/env python3
"""Validate study specs against surety's JSON Schema with an independent implementation.

Usage: check_schema.py SCHEMA.json SPEC.yaml [SPEC.yaml ...]

Each spec is read with ruamel.yaml in YAML 1.2 mode (the YAML version the surety loader reads),
turned into plain JSON data (dates become their YYYY-MM-DD text, as an editor's YAML tooling
passes them to a schema), and validated with the `jsonschema` package against draft 2020-12.
The schema itself is first checked against the draft 2020-12 meta-schema.

Prints one JSON object per spec and line: {"file": ..., "valid": true|false, "errors": [...]}.
Exit status: 0 when every file was checked (valid or not), 2 on bad usage, 3 when the schema
itself is invalid, 77 when ruamel.yaml or jsonschema is not installed (the caller skips).

Requires: pip install jsonschema ruamel.yaml
"""

import datetime
import json
import sys

try:
    import jsonschema
    from ruamel.yaml import YAML
except ImportError as missing:  # pragma: no cover - depends on the machine
    print(f"check_schema.py: {missing}; run `pip install jsonschema ruamel.yaml`", file=sys.stderr)
    sys.exit(77)


def plain(value):
    """ruamel's values as JSON data: dates and times as ISO text, everything else unchanged."""
    if isinstance(value, dict):
        return {str(k): plain(v) for k, v in value.items()}
    if isinstance(value, list):
        return [plain(v) for v in value]
    if isinstance(value, (datetime.date, datetime.datetime)):
        return value.isoformat()
    return value


def main(argv):
    if len(argv) < 3:
        print(__doc__, file=sys.stderr)
        return 2
    with open(argv[1], encoding="utf-8") as f:
        schema = json.load(f)
    validator_class = jsonschema.Draft202012Validator
    try:
        validator_class.check_schema(schema)
    except jsonschema.exceptions.SchemaError as e:
        print(f"check_schema.py: the schema is not a valid draft 2020-12 schema: {e.message}", file=sys.stderr)
        return 3
    validator = validator_class(schema)
    yaml = YAML(typ="safe", pure=True)
    yaml.version = (1, 2)
    for path in argv[2:]:
        try:
            with open(path, encoding="utf-8") as f:
                data = plain(yaml.load(f))
        except Exception as e:  # a YAML error makes the spec invalid, not the run
            print(json.dumps({"file": path, "valid": False, "errors": [f"YAML: {e}"]}))
            continue
        errors = sorted(
            f"{'/'.join(str(p) for p in e.absolute_path) or '(root)'}: {e.message}"
            for e in validator.iter_errors(data)
        )
        print(json.dumps({"file": path, "valid": not errors, "errors": errors}, ensure_ascii=False))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
