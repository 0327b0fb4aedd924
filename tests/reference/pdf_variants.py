#!/usr/bin/env python3
"""Write re-saved and re-encoded variants of a report PDF with pikepdf (qpdf), so that surety's
PDF reader is checked on structures other writers produce, against pikepdf's own reading.

Usage: pdf_variants.py REPORT.pdf OUTDIR

Writes into OUTDIR and prints a JSON list [{"file": path, "kind": kind, "encrypted": bool}]:
  object-streams  objects packed into object streams, cross-reference stream with a predictor
  uncompressed    every stream written without filters
  qdf             qpdf's QDF form (uncompressed, one object per block)
  linearized      linearized ("fast web view"): two cross-reference sections
  filters         two files added, and the four embedded files re-encoded with ASCIIHex,
                  ASCII85 + Flate, RunLength, and Flate with a PNG predictor
  many-names      a new PDF with 40 attachments whose names need PDFDocEncoding and UTF-16
                  (a name tree that qpdf splits into /Kids)
  encrypted       AES-256 encrypted with an empty user password

Exit status 0 on success, 77 when pikepdf is not installed (the caller skips the check).
Requires: pip install pikepdf
"""

import base64
import binascii
import json
import os
import sys
import zlib

try:
    import pikepdf
    from pikepdf import Name
except ImportError as missing:  # pragma: no cover - depends on the machine
    print(f"pdf_variants.py: {missing}; run `pip install pikepdf`", file=sys.stderr)
    sys.exit(77)


def run_length(data):
    """RunLengthDecode encoding (ISO 32000-1 §7.4.5): repeats of 3+ bytes, literal runs."""
    out, i = bytearray(), 0
    while i < len(data):
        j = i
        while j < len(data) and j - i < 128 and data[j] == data[i]:
            j += 1
        if j - i >= 3:
            out += bytes([257 - (j - i), data[i]])
            i = j
            continue
        j = i
        while j < len(data) and j - i < 128 and not (j + 2 < len(data) and data[j] == data[j + 1] == data[j + 2]):
            j += 1
        out += bytes([j - i - 1]) + data[i:j]
        i = j
    return bytes(out + b"\x80")


def png_up(data, columns):
    """Rows of `columns` bytes, each with PNG filter type 2 (up); the last row zero-padded."""
    data += b"\0" * (-len(data) % columns)
    rows, prior = bytearray(), bytes(columns)
    for k in range(0, len(data), columns):
        row = data[k:k + columns]
        rows += b"\x02" + bytes((a - b) % 256 for a, b in zip(row, prior))
        prior = row
    return bytes(rows)


def main(argv):
    if len(argv) != 3:
        print(__doc__, file=sys.stderr)
        return 2
    source, outdir = argv[1], argv[2]
    os.makedirs(outdir, exist_ok=True)
    made = []

    def out(kind, encrypted=False):
        path = os.path.join(outdir, f"{kind}.pdf")
        made.append({"file": path, "kind": kind, "encrypted": encrypted})
        return path

    with pikepdf.open(source) as pdf:
        pdf.save(out("object-streams"), object_stream_mode=pikepdf.ObjectStreamMode.generate)
    with pikepdf.open(source) as pdf:
        pdf.save(out("uncompressed"), compress_streams=False,
                 stream_decode_level=pikepdf.StreamDecodeLevel.generalized,
                 object_stream_mode=pikepdf.ObjectStreamMode.disable)
    with pikepdf.open(source) as pdf:
        pdf.save(out("qdf"), qdf=True)
    with pikepdf.open(source) as pdf:
        pdf.save(out("linearized"), linearize=True)
    with pikepdf.open(source) as pdf:
        encodings = {
            "results.json": lambda d: (binascii.hexlify(d) + b">", Name.ASCIIHexDecode, None),
            "study.yaml": lambda d: (base64.a85encode(zlib.compress(d), adobe=True)[2:],
                                     pikepdf.Array([Name.ASCII85Decode, Name.FlateDecode]), None),
            "runs.bin": lambda d: (run_length(d), Name.RunLengthDecode, None),
            "rows.bin": lambda d: (zlib.compress(png_up(d, 16)), Name.FlateDecode,
                                   pikepdf.Dictionary(Predictor=12, Columns=16)),
        }
        # Two more files, so that each encoding is used once; the second fills whole rows of
        # 16 bytes, so the predictor adds no padding.
        pdf.attachments["runs.bin"] = pikepdf.AttachedFileSpec(
            pdf, b"\0" * 300 + bytes(range(256)) + b"x" * 129 + b"ab", filename="runs.bin")
        pdf.attachments["rows.bin"] = pikepdf.AttachedFileSpec(
            pdf, bytes((7 * i) % 251 for i in range(16 * 40)), filename="rows.bin")
        for name, spec in pdf.attachments.items():
            stream = spec.obj.EF.F
            data = stream.read_bytes()
            encoded, filt, parms = encodings[name](data)
            if parms is None:
                stream.write(encoded, filter=filt)
            else:
                stream.write(encoded, filter=filt, decode_parms=parms)
        pdf.save(out("filters"), compress_streams=False,
                 object_stream_mode=pikepdf.ObjectStreamMode.disable)
    with pikepdf.new() as pdf:
        pdf.add_blank_page()
        # Every character PDFDocEncoding places outside Latin-1 (ISO 32000-1 Annex D), which
        # qpdf writes in that encoding, and names that need UTF-16.
        pdfdoc = "˘ˇˆ˙˝˛˚˜•†‡…—–ƒ⁄‹›−‰„“”‘’‚™ﬁﬂŁŒŠŸŽıłœšž€"
        names = ["données-é.csv", "€uro•list.txt", "日本語.json", "a b (c).yaml", "tab\there.txt",
                 f"pdfdoc {pdfdoc}.txt"]
        names += [f"file-{i:02d}.txt" for i in range(34)]
        for i, name in enumerate(names):
            data = (f"attachment {i}: {name}\n" * (i + 1)).encode("utf-8")
            pdf.attachments[name] = pikepdf.AttachedFileSpec(pdf, data, filename=name)
        pdf.save(out("many-names"))
    with pikepdf.open(source) as pdf:
        pdf.save(out("encrypted", encrypted=True),
                 encryption=pikepdf.Encryption(owner="owner", user="", R=6))
    print(json.dumps(made, ensure_ascii=False))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
