//! The JSON Schema (draft 2020-12) of study spec format 1, printed by `surety schema`, so that
//! editors can complete and check a `study.yaml` while it is written.
//!
//! The schema describes the spec as a YAML 1.2 reader sees it once parsed into plain data. It
//! refuses what the loader refuses wherever JSON Schema can say so: unknown and missing keys,
//! types, the words allowed for each setting, number ranges, the one form of `data`, and keys
//! that only apply when another key has a certain value. What it cannot say is listed in
//! `$comment`; the loader remains the authority, and `surety check` gives located messages.
//!
//! Key order in the output is fixed: `serde_json::Map` is a sorted map unless the
//! `preserve_order` feature is on, and then it keeps the order written here; either way, no hash
//! order reaches the output.

use serde_json::{Value, json};

/// Identifies this schema (`$id`); a URN because the schema is served by the program, not from
/// a web address.
pub const SCHEMA_ID: &str = "urn:surety:schema:study-spec:1";

/// Largest count the loader accepts (u64::MAX), written out so the schema is exact.
const COUNT_MAX: u64 = u64::MAX;

/// A confidence written as a percentage: 50 % up to (not including) 100 %, as the loader reads
/// it (surrounding blanks allowed, no sign, no exponent).
const PERCENT: &str = r"^[ \t]*0*(5[0-9]|[6-9][0-9])(\.[0-9]*)?[ \t]*%[ \t]*$";

/// `YYYY-MM-DD` with a month 01–12, a day 01–31 and a year from 0001; whether the day exists
/// in that month is left to the loader.
const DATE: &str = r"^[ \t]*([0-9]{3}[1-9]|[0-9]{2}[1-9][0-9]|[0-9][1-9][0-9]{2}|[1-9][0-9]{3})-(0[1-9]|1[0-2])-(0[1-9]|[12][0-9]|3[01])[ \t]*$";

/// The JSON Schema of study spec format 1. Pure; every call returns the same value, and its
/// serialisation is byte-identical across runs and machines.
pub fn schema() -> Value {
    json!({
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": SCHEMA_ID,
        "title": "surety study spec, format 1",
        "description": "One study: what is claimed about a failure rate or a bounded mean, the data it rests on, and how the report is made. Paths are relative to the spec file.",
        "$comment": "Checked by the loader only: events at most trials; a limit, assumed mean or summary mean inside the declared range; a summary sd no larger than the range allows for its mean and n; assumed_sd at most half the range; unique arm names; one spending weight per planned look when `planned` is given; calendar days that exist; YAML-level rules (duplicate keys, tags, YAML 1.1 booleans such as yes/no, numbers with leading zeros, quoted numbers).",
        "type": "object",
        "additionalProperties": false,
        "required": ["surety", "study", "claim", "outcome", "data"],
        "properties": {
            "surety": {
                "description": "Format version of the spec. Always 1.",
                "const": 1
            },
            "study": study(),
            "claim": claim(),
            "outcome": outcome(),
            "data": data(),
            "dependence": dependence(),
            "looks": looks(),
            "method": method(),
            "plan": plan(),
            "attestations": attestations(),
            "signatures": signatures(),
            "report": report()
        },
        "allOf": rules(),
        "$defs": defs()
    })
}

/// Building blocks referred to with `$ref`.
fn defs() -> Value {
    json!({
        "name": {
            "description": "Text that identifies something (an id, a name, a path): a non-blank string. In YAML, quote it if it looks like a number or a boolean.",
            "type": "string",
            "pattern": "\\S"
        },
        "optional-name": {
            "anyOf": [{"$ref": "#/$defs/name"}, {"type": "null"}]
        },
        "text": {
            "description": "Free text, taken as written; must not be blank.",
            "type": ["string", "number", "boolean"],
            "pattern": "\\S"
        },
        "optional-text": {
            "description": "Free text, taken as written; blank or empty means not given.",
            "type": ["string", "number", "boolean", "null"]
        },
        "date": {
            "description": "A calendar date written YYYY-MM-DD.",
            "type": ["string", "null"],
            "pattern": DATE
        },
        "count": {
            "type": "integer",
            "minimum": 0,
            "maximum": COUNT_MAX
        },
        "open-fraction": {
            "type": "number",
            "exclusiveMinimum": 0,
            "exclusiveMaximum": 1
        },
        "confidence": {
            "description": "The confidence 1 − δ: a fraction from 0.5 up to (not including) 1, such as 0.95, or a percentage string such as \"95%\". A value below 0.5 is refused because it is almost always the error budget δ written in its place.",
            "oneOf": [
                {"type": "number", "minimum": 0.5, "exclusiveMaximum": 1},
                {"type": "string", "pattern": PERCENT}
            ]
        },
        "counts": {
            "title": "inline counts",
            "description": "The counts of one arm of a binary outcome.",
            "type": "object",
            "additionalProperties": false,
            "required": ["trials", "events"],
            "properties": {
                "trials": {
                    "description": "Number of trials run; at least 1.",
                    "$ref": "#/$defs/count",
                    "minimum": 1
                },
                "events": {
                    "description": "Number of those trials in which the event happened; at most `trials`.",
                    "$ref": "#/$defs/count"
                }
            }
        },
        "n": {
            "description": "Number of values summarised; at least 2.",
            "$ref": "#/$defs/count",
            "minimum": 2
        },
        "mean": {
            "description": "Mean of the values, in data units; inside `outcome.range`.",
            "type": "number"
        },
        "sd": {
            "description": "Sample standard deviation of the values (n − 1 in the denominator), in data units; not negative, and no larger than values inside `outcome.range` with this mean can have.",
            "type": "number",
            "minimum": 0
        },
        "summary": {
            "title": "summary",
            "description": "n, mean and standard deviation of the values of one arm of a bounded outcome, when the values themselves are not given.",
            "type": "object",
            "additionalProperties": false,
            "required": ["n", "mean", "sd"],
            "properties": {
                "n": {"$ref": "#/$defs/n"},
                "mean": {"$ref": "#/$defs/mean"},
                "sd": {"$ref": "#/$defs/sd"}
            }
        },
        "arm-counts": {
            "description": "One arm given as counts.",
            "type": "object",
            "additionalProperties": false,
            "required": ["name", "trials", "events"],
            "properties": {
                "name": {"description": "Name of the arm, unique among the arms.", "$ref": "#/$defs/name"},
                "trials": {"$ref": "#/$defs/counts/properties/trials"},
                "events": {"$ref": "#/$defs/counts/properties/events"}
            }
        },
        "arm-summary": {
            "description": "One arm given as a summary of bounded values.",
            "type": "object",
            "additionalProperties": false,
            "required": ["name", "n", "mean", "sd"],
            "properties": {
                "name": {"description": "Name of the arm, unique among the arms.", "$ref": "#/$defs/name"},
                "n": {"$ref": "#/$defs/n"},
                "mean": {"$ref": "#/$defs/mean"},
                "sd": {"$ref": "#/$defs/sd"}
            }
        },
        "arms": {
            "title": "arms",
            "description": "Several arms (builds, sites, variants), each measured separately; all given as counts or all as summaries.",
            "type": "object",
            "additionalProperties": false,
            "required": ["arms"],
            "properties": {
                "arms": {
                    "type": "array",
                    "minItems": 1,
                    "anyOf": [
                        {"items": {"$ref": "#/$defs/arm-counts"}},
                        {"items": {"$ref": "#/$defs/arm-summary"}}
                    ]
                }
            }
        },
        "file": {
            "title": "data file",
            "description": "A data file with one row per trial.",
            "type": "object",
            "additionalProperties": false,
            "required": ["file"],
            "properties": {
                "file": {
                    "description": "Path of the data file (.csv, .tsv or .parquet), relative to the spec.",
                    "$ref": "#/$defs/name"
                },
                "column": {
                    "description": "Column holding the outcome of each trial.",
                    "$ref": "#/$defs/optional-name"
                },
                "arm_column": {
                    "description": "Column naming the arm of each row.",
                    "$ref": "#/$defs/optional-name"
                },
                "cluster_column": {
                    "description": "Column naming the cluster of each row; required when dependence.model is clustered, and only then allowed.",
                    "$ref": "#/$defs/optional-name"
                },
                "order_column": {
                    "description": "Column giving the order in which the trials were run.",
                    "$ref": "#/$defs/optional-name"
                }
            }
        }
    })
}

fn study() -> Value {
    json!({
        "description": "What the document is about.",
        "type": "object",
        "additionalProperties": false,
        "required": ["id", "title"],
        "properties": {
            "id": {"description": "Document id, printed on every page of the report.", "$ref": "#/$defs/name"},
            "title": {"description": "One-line title, printed on every page.", "$ref": "#/$defs/text"},
            "owner": {"description": "Team or person responsible for the study.", "$ref": "#/$defs/optional-text"},
            "requirement": {"description": "The requirement the claim demonstrates, in the author's words.", "$ref": "#/$defs/optional-text"},
            "date": {"description": "Date of the study. When left out, SOURCE_DATE_EPOCH or today is used.", "$ref": "#/$defs/date"},
            "description": {"description": "Free text printed in the report.", "$ref": "#/$defs/optional-text"}
        }
    })
}

fn claim() -> Value {
    json!({
        "description": "What is to be guaranteed.",
        "type": "object",
        "additionalProperties": false,
        "required": ["quantity", "side", "limit", "confidence"],
        "properties": {
            "quantity": {"description": "What the rate or mean is of, in words.", "$ref": "#/$defs/text"},
            "side": {
                "description": "upper: the true value is at most the limit; lower: at least the limit; two-sided: both bounds are given.",
                "enum": ["upper", "lower", "two-sided"]
            },
            "limit": {
                "description": "The value the bound is compared with: a fraction strictly between 0 and 1 for a binary outcome, a value strictly inside the range for a bounded one.",
                "type": "number"
            },
            "confidence": {"$ref": "#/$defs/confidence"},
            "scope": {
                "description": "How a claim about several arms is read: each (every arm on its own), all (all arms at once) or best (the best arm is picked, then certified). Default: each.",
                "enum": ["each", "all", "best", null]
            }
        }
    })
}

fn outcome() -> Value {
    json!({
        "description": "What one trial yields.",
        "type": "object",
        "additionalProperties": false,
        "required": ["type"],
        "properties": {
            "type": {
                "description": "binary: each trial has the event (1) or not (0); bounded: each trial gives a value inside a declared range.",
                "enum": ["binary", "bounded"]
            },
            "event": {"description": "Binary outcomes: what a 1 means.", "$ref": "#/$defs/optional-text"},
            "range": {
                "description": "Bounded outcomes: the range [low, high] every value lies in, in data units, declared before the data are seen; low below high.",
                "type": ["array", "null"],
                "items": {"type": "number"},
                "minItems": 2,
                "maxItems": 2
            },
            "unit": {"description": "Bounded outcomes: unit of the values.", "$ref": "#/$defs/optional-text"}
        }
    })
}

fn data() -> Value {
    json!({
        "description": "Where the outcomes come from: exactly one of inline counts (trials and events), arms, a data file, or a summary (n, mean, sd) of bounded values.",
        "type": "object",
        "oneOf": [
            {"$ref": "#/$defs/counts"},
            {"$ref": "#/$defs/arms"},
            {"$ref": "#/$defs/file"},
            {"$ref": "#/$defs/summary"}
        ]
    })
}

fn dependence() -> Value {
    json!({
        "description": "How the trials may depend on each other. Default: independent.",
        "type": ["object", "null"],
        "additionalProperties": false,
        "properties": {
            "model": {
                "description": "independent; clustered (trials grouped by data.cluster_column); martingale (an outcome may depend on earlier ones in run order); m-dependent (each trial may depend on its m neighbours).",
                "enum": ["independent", "clustered", "martingale", "m-dependent", null]
            },
            "m": {
                "description": "m-dependent only: how many neighbouring trials each trial may depend on; at least 1.",
                "anyOf": [{"$ref": "#/$defs/count", "minimum": 1}, {"type": "null"}]
            },
            "rationale": {"description": "Why the model fits, printed in the assumption checklist.", "$ref": "#/$defs/optional-text"}
        }
    })
}

fn looks() -> Value {
    json!({
        "description": "How often the data are analysed over the life of the study. Default: one planned look.",
        "type": ["object", "null"],
        "additionalProperties": false,
        "properties": {
            "mode": {
                "description": "planned: fixed-sample methods share the error budget over the planned looks; anytime: methods valid at any stopping time, with nothing to share.",
                "enum": ["planned", "anytime", null]
            },
            "planned": {
                "description": "Planned mode: number of looks planned; at least 1. Default 1.",
                "anyOf": [{"type": "integer", "minimum": 1, "maximum": u32::MAX}, {"type": "null"}]
            },
            "spending": {
                "description": "Planned mode: how the error budget is shared over the looks: equal, or one positive weight per planned look.",
                "anyOf": [
                    {"const": "equal"},
                    {"type": "array", "minItems": 1, "items": {"type": "number", "exclusiveMinimum": 0}},
                    {"type": "null"}
                ]
            },
            "ledger": {
                "description": "File of the look history, relative to the spec. Default: <spec stem>.ledger.jsonl.",
                "$ref": "#/$defs/optional-name"
            }
        }
    })
}

fn method() -> Value {
    json!({
        "description": "Which bound is the guarantee and which are shown beside it.",
        "type": ["object", "null"],
        "additionalProperties": false,
        "properties": {
            "primary": {
                "description": "auto (chosen from the spec alone, never from the data) or a method id listed by `surety methods`. Default: auto.",
                "$ref": "#/$defs/optional-name"
            },
            "compare": {
                "description": "Method ids shown beside the primary for information only; each at most once.",
                "anyOf": [
                    {"type": "array", "uniqueItems": true, "items": {"$ref": "#/$defs/name"}},
                    {"type": "null"}
                ]
            }
        }
    })
}

fn plan() -> Value {
    json!({
        "description": "Inputs of sample-size planning.",
        "type": ["object", "null"],
        "additionalProperties": false,
        "properties": {
            "assumed_rate": {
                "description": "Binary: the rate believed true, strictly between 0 and 1. Bounded: the mean believed true, inside the range.",
                "type": ["number", "null"]
            },
            "assumed_sd": {
                "description": "Bounded only: the standard deviation believed true; above 0 and at most half the range.",
                "anyOf": [{"type": "number", "exclusiveMinimum": 0}, {"type": "null"}]
            },
            "pass_probability": {
                "description": "Wanted chance of passing when the assumed value is true; strictly between 0 and 1.",
                "anyOf": [{"$ref": "#/$defs/open-fraction"}, {"type": "null"}]
            },
            "allowed_events": {
                "description": "Binary only: numbers of events a demonstration plan may allow; each at most once.",
                "anyOf": [
                    {"type": "array", "uniqueItems": true, "items": {"$ref": "#/$defs/count"}},
                    {"type": "null"}
                ]
            },
            "registered": {
                "description": "Where the plan was registered before testing began.",
                "$ref": "#/$defs/optional-text"
            }
        }
    })
}

fn attestations() -> Value {
    json!({
        "description": "Assumption id (as listed by `surety check`) → who confirms that the assumption holds.",
        "type": ["object", "null"],
        "additionalProperties": {
            "type": "object",
            "additionalProperties": false,
            "required": ["by"],
            "properties": {
                "by": {"description": "Who confirms the assumption.", "$ref": "#/$defs/text"},
                "date": {"description": "When it was confirmed.", "$ref": "#/$defs/date"},
                "note": {"description": "Free text, such as where the evidence is kept.", "$ref": "#/$defs/optional-text"}
            }
        }
    })
}

fn signatures() -> Value {
    json!({
        "description": "Signature blocks printed at the end of the report, in this order.",
        "type": ["array", "null"],
        "items": {
            "type": "object",
            "additionalProperties": false,
            "required": ["role", "meaning"],
            "properties": {
                "role": {"description": "Role of the signer, such as Author or Approver.", "$ref": "#/$defs/text"},
                "name": {"description": "Printed name; leave out to sign on paper.", "$ref": "#/$defs/optional-text"},
                "meaning": {"description": "What the signature means, such as reviewed or approved.", "$ref": "#/$defs/text"}
            }
        }
    })
}

fn report() -> Value {
    json!({
        "description": "How the PDF report is made.",
        "type": ["object", "null"],
        "additionalProperties": false,
        "properties": {
            "template": {
                "description": "default, or the path of a .typ.j2 template relative to the spec.",
                "$ref": "#/$defs/optional-name"
            },
            "embed_data": {
                "description": "Whether data files are embedded in the PDF: auto (when small), true or false.",
                "enum": ["auto", true, false, null]
            }
        }
    })
}

/// `if` clause: the section `section` is a mapping whose `key` is `value`.
fn when(section: &str, key: &str, value: &str) -> Value {
    json!({
        "required": [section],
        "properties": {
            section: {
                "type": "object",
                "required": [key],
                "properties": {key: {"const": value}}
            }
        }
    })
}

/// Rules that tie one key to another.
fn rules() -> Value {
    let no_summary = json!({"properties": {"n": false, "mean": false, "sd": false}});
    json!([
        {
            "if": when("outcome", "type", "binary"),
            "then": {
                "properties": {
                    "outcome": {"properties": {"range": false, "unit": false}},
                    "claim": {"properties": {"limit": {"exclusiveMinimum": 0, "exclusiveMaximum": 1}}},
                    "data": {
                        "properties": {
                            "n": false, "mean": false, "sd": false,
                            "arms": {"items": no_summary}
                        }
                    },
                    "plan": {
                        "properties": {
                            "assumed_rate": {"anyOf": [{"$ref": "#/$defs/open-fraction"}, {"type": "null"}]},
                            "assumed_sd": {"type": "null"}
                        }
                    }
                }
            }
        },
        {
            "if": when("outcome", "type", "bounded"),
            "then": {
                "properties": {
                    "outcome": {
                        "required": ["range"],
                        "properties": {"range": {"type": "array"}, "event": {"type": "null"}}
                    },
                    "plan": {"properties": {"allowed_events": false}}
                }
            }
        },
        {
            "if": when("dependence", "model", "m-dependent"),
            "then": {
                "properties": {"dependence": {"required": ["m"], "properties": {"m": {"type": "integer"}}}}
            },
            "else": {
                "properties": {"dependence": {"properties": {"m": {"type": "null"}}}}
            }
        },
        {
            "if": when("dependence", "model", "clustered"),
            "then": {
                "properties": {
                    "data": {
                        "required": ["file", "cluster_column"],
                        "properties": {"cluster_column": {"$ref": "#/$defs/name"}}
                    }
                }
            },
            "else": {
                "properties": {"data": {"properties": {"cluster_column": {"type": "null"}}}}
            }
        },
        {
            "if": when("looks", "mode", "anytime"),
            "then": {
                "properties": {"looks": {"properties": {"planned": false, "spending": false}}}
            }
        },
        {
            "$comment": "Without `planned` there is one planned look, so a list of weights has one entry.",
            "if": {
                "required": ["looks"],
                "properties": {"looks": {"type": "object", "properties": {"planned": {"type": "null"}}}}
            },
            "then": {
                "properties": {"looks": {"properties": {"spending": {"maxItems": 1}}}}
            }
        }
    ])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn output_is_deterministic() {
        let a = serde_json::to_string_pretty(&schema()).unwrap_or_default();
        let b = serde_json::to_string_pretty(&schema()).unwrap_or_default();
        assert!(!a.is_empty());
        assert_eq!(a, b);
    }

    /// Every `$ref` points at a definition that exists.
    #[test]
    fn references_resolve() {
        fn walk(v: &Value, root: &Value, seen: &mut usize) {
            match v {
                Value::Object(m) => {
                    if let Some(Value::String(r)) = m.get("$ref") {
                        let pointer = r.strip_prefix('#').unwrap_or(r);
                        assert!(root.pointer(pointer).is_some(), "dangling $ref {r}");
                        *seen += 1;
                    }
                    m.values().for_each(|x| walk(x, root, seen));
                }
                Value::Array(a) => a.iter().for_each(|x| walk(x, root, seen)),
                _ => {}
            }
        }
        let s = schema();
        let mut seen = 0;
        walk(&s, &s, &mut seen);
        assert!(seen > 20, "{seen}");
    }
}
