#!/usr/bin/env python3
"""Describe a surety report PDF as seen by an independent PDF library (pikepdf, built on qpdf).

Usage: pdf_structure.py REPORT.pdf

Prints one JSON object:
  pdf_version        header version, e.g. "1.7"
  pdfa               {"part": "3", "conformance": "B"} from the XMP pdfaid fields, or null
  xmp                title, creators, creator_tool, producer, create_date, modify_date,
                     metadata_date, document_id, instance_id, description, keywords
                     (each null when absent)
  info               the document information dictionary (Title, Author, Creator, Producer,
                     CreationDate, ModDate), as text
  trailer_id         the two strings of the trailer /ID, decoded as Latin-1 text
  output_intent      whether the catalog has an /OutputIntents entry of subtype GTS_PDFA1
  embedded_files     [{name, sha256, size, mime_type, relationship, description}] from the
                     EmbeddedFiles name tree, in name-tree order
  af                 file names listed in the catalog's /AF array, in order
  problems           what pikepdf's syntax check reports (empty when none)

Exit status 0 on success, 77 when pikepdf is not installed (the caller skips the check).
Requires: pip install pikepdf
"""

import hashlib
import json
import sys

try:
    import pikepdf
except ImportError as missing:  # pragma: no cover - depends on the machine
    print(f"pdf_structure.py: {missing}; run `pip install pikepdf`", file=sys.stderr)
    sys.exit(77)

DC = "{http://purl.org/dc/elements/1.1/}"
XMP = "{http://ns.adobe.com/xap/1.0/}"
MM = "{http://ns.adobe.com/xap/1.0/mm/}"
PDF = "{http://ns.adobe.com/pdf/1.3/}"
PDFAID = "{http://www.aiim.org/pdfa/ns/id/}"


def text(value):
    if value is None:
        return None
    if isinstance(value, pikepdf.Name):
        return str(value)[1:]
    return str(value)


def describe(path):
    with pikepdf.open(path) as pdf:
        meta = pdf.open_metadata()

        def field(key):
            value = meta.get(key)
            if isinstance(value, (list, set)):
                return sorted(str(v) for v in value) if isinstance(value, set) else [str(v) for v in value]
            return None if value is None else str(value)

        part, conformance = field(PDFAID + "part"), field(PDFAID + "conformance")
        intents = pdf.Root.get("/OutputIntents")
        output_intent = intents is not None and any(
            text(i.get("/S")) == "GTS_PDFA1" for i in intents
        )
        files = []
        for name, spec in pdf.attachments.items():
            f = spec.get_file()
            # `specialized` also undoes RunLengthDecode, which qpdf leaves alone by default.
            data = f.obj.read_bytes(decode_level=pikepdf.StreamDecodeLevel.specialized)
            files.append({
                "name": name,
                "sha256": hashlib.sha256(data).hexdigest(),
                "size": len(data),
                "mime_type": f.mime_type or None,
                "relationship": text(spec.obj.get("/AFRelationship")),
                "description": spec.description or None,
            })
        af = []
        for spec in pdf.Root.get("/AF", []):
            af.append(text(spec.get("/UF", spec.get("/F"))))
        info = {k[1:]: text(v) for k, v in pdf.docinfo.items()} if pdf.trailer.get("/Info") is not None else {}
        trailer_id = [bytes(s).decode("latin-1") for s in pdf.trailer.get("/ID", [])]
        return {
            "pdf_version": pdf.pdf_version,
            "pdfa": {"part": part, "conformance": conformance} if part else None,
            "xmp": {
                "title": field(DC + "title"),
                "creators": field(DC + "creator"),
                "creator_tool": field(XMP + "CreatorTool"),
                "producer": field(PDF + "Producer"),
                "create_date": field(XMP + "CreateDate"),
                "modify_date": field(XMP + "ModifyDate"),
                "metadata_date": field(XMP + "MetadataDate"),
                "document_id": field(MM + "DocumentID"),
                "instance_id": field(MM + "InstanceID"),
                "description": field(DC + "description"),
                "keywords": field(PDF + "Keywords"),
            },
            "info": info,
            "trailer_id": trailer_id,
            "output_intent": output_intent,
            "embedded_files": files,
            "af": af,
            "problems": [str(p) for p in pdf.check_pdf_syntax()],
        }


def main(argv):
    if len(argv) != 2:
        print(__doc__, file=sys.stderr)
        return 2
    print(json.dumps(describe(argv[1]), ensure_ascii=False, sort_keys=True))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
