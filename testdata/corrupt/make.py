#!/usr/bin/env python3
"""Writes the corrupted-file corpus of testdata/corrupt/ (see testdata/README.md,
section "corrupt"). Every file is derived from the invented demo scan
testdata/batch/scans/KM2611-W01-s01.csv (or, for the JCAMP-DX case, from
testdata/jcampdx/km2611_w01_affn_nm_T.jdx) by the damage its name says.
Run from this folder: python3 make.py. Deterministic (no randomness but a
seeded generator for the binary file)."""
import random

base = open("../batch/scans/KM2611-W01-s01.csv", "rb").read().decode("utf-8")
lines = base.split("\n")
if lines[-1] == "":
    lines = lines[:-1]
pre, header, rows = lines[:6], lines[6], lines[7:]   # rows: "1000.0,51.670" ... (line 8 on)


def put(name, text, enc="utf-8"):
    with open(name, "wb") as f:
        f.write(text if isinstance(text, bytes) else text.encode(enc))


def csv(rs, hdr=header, p=pre, nl="\n"):
    return nl.join(p + [hdr] + rs) + nl


# Truncated: the export stopped in the middle of row 120 (line 127), after the comma.
put("truncated.csv", "\n".join(pre + [header] + rows[:119]) + "\n" + rows[119].split(",")[0] + ",")

# Two exports pasted together: the second half uses ';' (line 158 on).
put("mixed_separators.csv", csv(rows[:150] + [r.replace(",", ";") for r in rows[150:]]))

# A semicolon export with a decimal comma, where someone edited row 40 (line 47) by hand with a point.
sc = [r.replace(",", ";").replace(".", ",") for r in rows]
sc[39] = rows[39].replace(",", ";")
put("mixed_decimal.csv", csv(sc, hdr="Wavelength (nm);%T", p=[l.replace(",", ";") for l in pre]))

# Unit mismatch: the header says nm, the values are in um.
put("unit_um_in_nm_column.csv", csv([("%.4f" % (float(r.split(",")[0]) / 1000)) + "," + r.split(",")[1] for r in rows]))

# Unit mismatch: the header says eV, the values are nm.
put("unit_nm_in_ev_column.csv", csv(rows, hdr="Energy (eV),%T"))

# Unit mismatch: the header says absorbance, the values are %T.
put("unit_pctT_in_abs_column.csv", csv(rows, hdr="Wavelength (nm),Abs"))

# Not monotonic: rows 200 and 201 (lines 207, 208) swapped.
nm = list(rows)
nm[199], nm[200] = nm[200], nm[199]
put("nonmonotonic.csv", csv(nm))

# Duplicated x: row 60 written twice (lines 67 and 68).
put("duplicated_x.csv", csv(rows[:60] + [rows[59]] + rows[60:]))

# All NaN: the detector was off.
put("all_nan.csv", csv([r.split(",")[0] + ",NaN" for r in rows]))

# T > 1 in a fraction file: a baseline taken on the wrong reference (T scaled by 2.5); the largest, 1.3026,
# on row 100 (line 107).
fr = ["%s,%.5f" % (r.split(",")[0], float(r.split(",")[1]) / 100 * 2.5) for r in rows]
put("fraction_above_one.csv", csv(fr, hdr="Wavelength (nm),T (fraction)"))

# Negative absorbance everywhere: sample and reference beams swapped.
import math
na = ["%s,%.5f" % (r.split(",")[0], math.log10(max(float(r.split(",")[1]), 0.01) / 100)) for r in rows]
put("negative_absorbance.csv", csv(na, hdr="Wavelength (nm),Abs"))

# UTF-16 LE with BOM, CRLF, tab-separated with a decimal comma: as a Windows instrument writes it.
u16 = "\r\n".join([l.replace(",", "\t", 1) for l in pre] + ["Wellenlänge [nm]\tT [%]"] +
                   [r.replace(",", "\t").replace(".", ",") for r in rows]) + "\r\n"
put("utf16le_bom_crlf.txt", b"\xff\xfe" + u16.encode("utf-16-le"))

# UTF-16 without a byte-order mark (not readable: the byte order is a guess).
put("utf16le_no_bom.txt", u16.encode("utf-16-le"))

# UTF-16 LE with BOM, cut after an odd number of bytes (copy interrupted).
put("utf16_truncated.txt", (b"\xff\xfe" + u16.encode("utf-16-le"))[:4001])

# Windows line endings.
put("crlf.csv", csv(rows, nl="\r\n"))

# Header only: the scan was aborted before the first point.
put("header_only.csv", csv([]))

# Empty file (0 bytes): a failed transfer.
put("empty.csv", b"")

# A PNG image renamed .csv (the 8-byte signature and an IHDR chunk, then seeded bytes).
rnd = random.Random(6)
png = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00\x01\x00\x00\x00\x01\x00\x08\x06\x00\x00\x00" + bytes(rnd.randrange(256) for _ in range(600))
put("binary_png.csv", png)

# Binary without NUL bytes (compressed data, say): invalid UTF-8 with control bytes.
put("binary_no_nul.csv", bytes(rnd.randrange(1, 256) for _ in range(800)))

# A good export followed by NUL padding (a file recovered after a crash).
put("nul_padded.csv", csv(rows).encode() + b"\x00" * 512)

# Latin-1 (Windows-1252) with a micro sign and an umlaut, semicolons and a decimal comma:
# old instrument software on Windows.
l1 = ["Gerät;KM-DB2", "Probe;W01 Punkt 1", "Wellenlänge (µm);T (%)"] + \
     ["%s;%s" % (("%.4f" % (float(r.split(",")[0]) / 1000)).replace(".", ","), r.split(",")[1].replace(".", ",")) for r in rows]
put("latin1_micro.csv", "\r\n".join(l1) + "\r\n", enc="cp1252")

# A trailing summary block after the data, as instrument software writes it.
put("trailing_summary.csv", csv(rows) + "\n[Statistics]\nAverage T (%),45.21\nMinimum T (%),0.012\nPoints,301\nScan end,2026-03-01 10:42\n")

# Excel's "sep=;" first line, semicolons and a decimal comma.
put("excel_sep_line.csv", "sep=;\r\n" + "\r\n".join(["Wavelength (nm);%T"] + [r.replace(",", ";").replace(".", ",") for r in rows]) + "\r\n")

# Excel "#N/A" in the y column (a formula over a missing cell), row 100 (line 107).
xn = list(rows)
xn[99] = xn[99].split(",")[0] + ",#N/A"
put("excel_na.csv", csv(xn))

# A decimal comma in a comma-separated file: "1000,0,51,670" (four cells per row).
put("decimal_comma_comma_sep.csv", csv([r.replace(".", ",") for r in rows]))

# A number that overflows float64 on row 10 (line 17).
ov = list(rows)
ov[9] = ov[9].split(",")[0] + ",1e999"
put("overflow.csv", csv(ov))

# Only one column of numbers (the y column was not exported).
put("one_column.csv", "\n".join(["%T"] + [r.split(",")[1] for r in rows]) + "\n")

# JCAMP-DX cut before ##END= in the middle of the data table.
jdx = open("../jcampdx/km2611_w01_affn_nm_T.jdx", "rb").read().decode("utf-8").split("\n")
cut = [i for i, l in enumerate(jdx) if l.startswith("##XYDATA")][0] + 6
put("truncated.jdx", "\n".join(jdx[:cut]) + "\n" + jdx[cut][:7])
