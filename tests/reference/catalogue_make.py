"""Writes the catalogue of awkward inputs: tests/bad/ (broken files embloom must refuse) and
tests/odd/ (valid but unusual files it must read correctly).

For tests/bad/ it writes the files, cases.json (per file: the problem, the commands that must
refuse it, extra arguments, and a fragment the error message must contain) and the table in
tests/bad/README.md. For tests/odd/ it writes the files and expected.json: every value as
numpy (binary files) or Python's csv module (text files) reads it, which is what the Rust test
compares embloom's reader against.

Deterministic (fixed values, no randomness, no timestamps), so CI can re-run it and diff.
Run from the repository root: python3 tests/reference/catalogue_make.py
"""

import csv
import io
import json
import os
import zipfile

import numpy as np

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")
BAD = os.path.join(ROOT, "bad")
ODD = os.path.join(ROOT, "odd")

# A small valid table: 8 rows, 3 features, 2 classes of 4 rows (enough for 2-fold assess).
X = np.array(
    [[0.5 * i + 0.25 * j - 1.0 for j in range(3)] for i in range(8)], dtype=np.float32
)
Y = np.array([0, 0, 0, 0, 1, 1, 1, 1], dtype=np.int64)
NAMES = ["cat", "cat", "cat", "cat", "dog", "dog", "dog", "dog"]

ALL = ["inspect", "grow", "assess"]


def csv_text(rows, sep=",", header=("label", "f0", "f1", "f2")):
    out = io.StringIO()
    w = csv.writer(out, delimiter=sep, lineterminator="\n")
    w.writerow(header)
    for r in rows:
        w.writerow(r)
    return out.getvalue()


def good_rows():
    return [[NAMES[i]] + [repr(float(v)) for v in X[i]] for i in range(8)]


def write(path, data):
    mode = "wb" if isinstance(data, bytes) else "w"
    kw = {} if isinstance(data, bytes) else {"newline": "", "encoding": "utf-8"}
    with open(path, mode, **kw) as f:
        f.write(data)


def savez(path, **arrays):
    # np.savez writes zip entries with the current time; write members by hand with a fixed
    # date so the archive bytes are reproducible.
    with zipfile.ZipFile(path, "w", zipfile.ZIP_STORED) as z:
        for k, a in arrays.items():
            buf = io.BytesIO()
            np.save(buf, a, allow_pickle=True)
            info = zipfile.ZipInfo(k + ".npy", date_time=(2020, 1, 1, 0, 0, 0))
            z.writestr(info, buf.getvalue())


def npy_bytes(a):
    buf = io.BytesIO()
    np.save(buf, a, allow_pickle=True)
    return buf.getvalue()


def make_bad():
    os.makedirs(BAD, exist_ok=True)
    cases = []

    def case(name, data, problem, expect, commands=ALL, args=()):
        if data is not None:
            if callable(data):
                data(os.path.join(BAD, name))
            else:
                write(os.path.join(BAD, name), data)
        cases.append(
            {
                "file": name,
                "problem": problem,
                "commands": list(commands),
                "args": list(args),
                "expect": expect,
            }
        )

    rows = good_rows()
    ragged = [r[:] for r in rows]
    ragged[3] = ragged[3][:3]
    case("ragged.csv", csv_text(ragged), "row 5 has 3 fields, the header 4",
         "3 fields where the header has 4")
    missing = [r[:] for r in rows]
    missing[2][2] = ""
    case("missing_value.csv", csv_text(missing), "an empty feature cell", "missing value")
    nonnum = [r[:] for r in rows]
    nonnum[1][3] = "n/a"
    case("non_numeric.csv", csv_text(nonnum), "a feature cell reads 'n/a'",
         "'n/a' is not a number")
    case("duplicate_columns.csv", csv_text(rows, header=("label", "f0", "f1", "f0")),
         "two columns named f0", "appears twice")
    case("unnamed_column.csv", csv_text(rows, header=("label", "f0", "", "f2")),
         "a column with an empty name (a pandas index)", "has no name")
    case("zero_rows.csv", csv_text([]), "a header and no rows", "zero rows")
    case("zero_columns.csv", csv_text([[n] for n in NAMES], header=("label",)),
         "a label column and no features", "zero columns")
    case("unclosed_quote.csv", csv_text(rows) + '"cat,1,2,3\n',
         "a quoted field that never closes", "never closed")
    case("not_utf8.csv", csv_text(rows).encode("utf-8").replace(b"dog", b"d\xf6g", 1),
         "a Latin-1 byte in a label", "not valid UTF-8")
    case("no_label_column.csv", csv_text(rows, header=("class", "f0", "f1", "f2")),
         "no column named label", "no label column")
    case("empty.csv", "", "an empty file", "empty")

    one = [r[:] for r in rows]
    for r in one:
        r[0] = "cat"
    case("single_class.csv", csv_text(one), "every row has the same class",
         "single class", commands=["assess"])

    labels_ok = npy_bytes(Y)
    write(os.path.join(BAD, "labels_ok.npy"), labels_ok)
    lab = ["--labels", "tests/bad/labels_ok.npy"]
    case("wrong_magic.npy", b"\x93NUMPZ" + npy_bytes(X)[6:], "the magic bytes are \\x93NUMPZ",
         "magic bytes", args=lab)
    case("truncated.npy", npy_bytes(X)[:-7], "the last 7 data bytes are missing",
         "truncated", args=lab)
    case("complex.npy", npy_bytes(X.astype(np.complex64)), "complex64 embeddings",
         "unsupported dtype '<c8'", args=lab)
    case("object.npy", npy_bytes(np.array([[1, "a", None]] * 8, dtype=object)),
         "an object (pickled) array", "never unpickles", args=lab)
    case("int_embeddings.npy", npy_bytes((X * 4).astype(np.int32)), "integer embeddings",
         "only float16", args=lab)
    # inspect describes an unlabelled matrix; the commands that need classes refuse it.
    case("no_labels_file.npy", npy_bytes(X), "a .npy without --labels", "--labels",
         commands=["grow", "assess"])
    write(os.path.join(BAD, "labels_short.npy"), npy_bytes(Y[:5]))
    case("labels_mismatch.npy", npy_bytes(X), "5 labels for 8 rows", "5 labels for 8",
         args=["--labels", "tests/bad/labels_short.npy"])

    nan_x = X.copy()
    nan_x[5, 1] = np.nan
    case("nan_embeddings.npz", lambda p: savez(p, embeddings=nan_x, labels=Y),
         "a NaN inside the embeddings (inspect reports it; grow and assess refuse)",
         "NaN or infinite", commands=["grow", "assess"])
    case("float_labels.npz",
         lambda p: savez(p, embeddings=X, labels=Y.astype(np.float64) + 0.5),
         "labels 0.5, 1.5: non-integral floats", "not a whole number")
    nan_y = Y.astype(np.float64)
    nan_y[6] = np.nan
    case("nan_labels.npz", lambda p: savez(p, embeddings=X, labels=nan_y), "a NaN label",
         "not a whole number")
    empty_y = np.array(["a", "b"] * 4)
    empty_y[3] = ""
    case("empty_label.npz", lambda p: savez(p, embeddings=X, labels=empty_y),
         "an empty class name in row 3", "class name is empty")
    big_y = Y.astype(np.float64)
    big_y[2] = 1e19
    case("huge_float_label.npz", lambda p: savez(p, embeddings=X, labels=big_y),
         "a float label of 1e19", "too large for a class code")
    case("groups_mismatch.npz",
         lambda p: savez(p, embeddings=X, labels=Y, groups=np.arange(7)),
         "7 groups for 8 rows", "7 values for 8")
    case("folds_mismatch.npz",
         lambda p: savez(p, embeddings=X, labels=Y, fold=np.array([0, 1] * 5)),
         "10 fold values for 8 rows", "10 values for 8")
    case("no_2d.npz",
         lambda p: savez(p, embeddings=X.ravel(), labels=Y),
         "an npz whose arrays are all 1-D", "must be a 2-D array")
    case("zero_rows.npz",
         lambda p: savez(p, embeddings=np.zeros((0, 3), np.float32), labels=Y[:0]),
         "a 0 × 3 matrix", "zero rows")
    case("zero_columns.npz",
         lambda p: savez(p, embeddings=np.zeros((8, 0), np.float32), labels=Y),
         "an 8 × 0 matrix", "zero columns")
    case("object_labels.npz",
         lambda p: savez(p, embeddings=X, labels=np.array(NAMES, dtype=object)),
         "labels stored as a Python object array", "never unpickles")
    case("not_a_zip.npz", b"PK\x03\x04" + b"\x00" * 60, "a zip header and nothing else",
         "not a readable .npz")

    def npy_with_shape(shape_text, data):
        head = "{'descr': '<f4', 'fortran_order': False, 'shape': %s, }" % shape_text
        head += " " * ((64 - (10 + len(head) + 1) % 64) % 64) + "\n"
        return b"\x93NUMPY\x01\x00" + len(head).to_bytes(2, "little") + head.encode() + data

    def bomb(p):
        # A deflated member whose header says 8 x 3 but which inflates to 4 MiB more.
        body = npy_with_shape("(8, 3)", X.astype("<f4").tobytes() + b"\x00" * (4 << 20))
        with zipfile.ZipFile(p, "w") as z:
            info = zipfile.ZipInfo("embeddings.npy", date_time=(2020, 1, 1, 0, 0, 0))
            info.compress_type = zipfile.ZIP_DEFLATED
            z.writestr(info, body)
            z.writestr(zipfile.ZipInfo("labels.npy", date_time=(2020, 1, 1, 0, 0, 0)),
                       npy_bytes(Y))

    case("bomb.npz", bomb,
         "a deflated member inflating 4 MiB past what its 8 x 3 header implies",
         "decompression bomb")

    def trillion(p):
        with zipfile.ZipFile(p, "w", zipfile.ZIP_STORED) as z:
            z.writestr(zipfile.ZipInfo("embeddings.npy", date_time=(2020, 1, 1, 0, 0, 0)),
                       npy_with_shape("(1000000000000, 3)", X.astype("<f4").tobytes()))
            z.writestr(zipfile.ZipInfo("labels.npy", date_time=(2020, 1, 1, 0, 0, 0)),
                       npy_bytes(Y))

    case("trillion_rows.npz", trillion, "a header claiming 10^12 rows over 96 data bytes",
         "(1000000000000, 3)")
    huge = [r[:] for r in rows]
    huge[4][1] = "1e19"
    case("huge_norm.csv", csv_text(huge),
         "a value of 1e19, whose square overflows float32 distances",
         "too large for float32", commands=("grow", "assess"))

    header = json.dumps({"embeddings": {"dtype": "F32", "shape": [8, 3], "data_offsets": [0, 96]}})
    case("short_data.safetensors",
         len(header).to_bytes(8, "little") + header.encode() + X.tobytes()[:50],
         "data_offsets point past the end of the file", "fall outside")
    case("huge_header.safetensors", (10**15).to_bytes(8, "little") + b"{}",
         "a header length of 10^15 bytes", "exceeds the file")
    case("table.parquet", b"PAR1",
         "the Parquet magic and nothing else (without the columnar feature: no Parquet support)",
         "Parquet")

    with open(os.path.join(BAD, "cases.json"), "w") as f:
        json.dump(cases, f, indent=1)
        f.write("\n")
    lines = [
        "# Broken inputs",
        "",
        "Every file here must be refused. `tests/hardening_catalogue.rs` runs each one through",
        "the commands listed and checks: a non-zero exit status, an error naming the file and",
        "containing the text in the last column, no `panicked` anywhere in the output, and no",
        "output file or report folder left behind. Generated by",
        "`tests/reference/catalogue_make.py` (which also writes `cases.json`, the table the test",
        "reads); valid-but-unusual files are in `tests/odd/`.",
        "",
        "| file | problem | refused by | the error says |",
        "|---|---|---|---|",
    ]
    for c in cases:
        extra = " (with `" + " ".join(c["args"]) + "`)" if c["args"] else ""
        lines.append(
            f"| `{c['file']}`{extra} | {c['problem']} | {', '.join(c['commands'])} "
            f"| {c['expect'].replace('|', '&#124;')} |"
        )
    lines.append("")
    lines.append("`labels_ok.npy` and `labels_short.npy` are companions of the `.npy` cases.")
    write(os.path.join(BAD, "README.md"), "\n".join(lines) + "\n")
    return cases


def make_odd():
    os.makedirs(ODD, exist_ok=True)
    expected = {}

    def npy_case(name, x, y, labels_name):
        np.save(os.path.join(ODD, name), x)
        np.save(os.path.join(ODD, labels_name), y)
        xr = np.load(os.path.join(ODD, name))
        yr = np.load(os.path.join(ODD, labels_name))
        expected[name] = {
            "args": ["--labels", "tests/odd/" + labels_name],
            "x": xr.astype(np.float32).tolist(),
            # integral labels become their decimal text (numpy's own str of the int)
            "labels": [str(int(v)) for v in yr],
        }

    npy_case("big_endian.npy", X.astype(">f8"), Y.astype(">i4"), "big_endian_labels.npy")
    npy_case("fortran.npy", np.asfortranarray(X), Y, "fortran_labels.npy")
    # A Fortran-ordered big-endian float32 array, both unusual at once.
    npy_case("fortran_big_endian.npy", np.asfortranarray(X.astype(">f4")), Y.astype(">u2"),
             "fortran_big_endian_labels.npy")

    yf = Y.astype(np.float64) * 3.0  # 0.0 and 3.0: integral floats
    savez(os.path.join(ODD, "integral_float_labels.npz"), embeddings=X, labels=yf)
    with np.load(os.path.join(ODD, "integral_float_labels.npz")) as z:
        expected["integral_float_labels.npz"] = {
            "args": [],
            "x": z["embeddings"].tolist(),
            "labels": [str(int(v)) for v in z["labels"]],
        }

    def text_case(name, text, sep, bom=False, newline="\n"):
        data = text.replace("\n", newline)
        raw = ("\ufeff" if bom else "") + data
        with open(os.path.join(ODD, name), "w", newline="", encoding="utf-8") as f:
            f.write(raw)
        with open(os.path.join(ODD, name), newline="", encoding="utf-8-sig") as f:
            rows = list(csv.reader(f, delimiter=sep))
        head = rows[0]
        li = head.index("label")
        feats = [i for i, h in enumerate(head) if h not in ("label", "id", "group", "fold")]
        body = [r for r in rows[1:] if r]
        expected[name] = {
            "args": [],
            "x": [[float(np.float32(r[i])) for i in feats] for r in body],
            "labels": [r[li] for r in body],
        }

    rows = good_rows()
    text_case("crlf.csv", csv_text(rows), ",", newline="\r\n")
    text_case("bom.csv", csv_text(rows), ",", bom=True)
    text_case("tabs.tsv", csv_text(rows, sep="\t"), "\t")
    quoted = [r[:] for r in rows]
    quoted[0][0] = 'cat, "the tabby"'
    quoted[4][0] = "dog\non two lines"
    out = io.StringIO()
    w = csv.writer(out, quoting=csv.QUOTE_ALL, lineterminator="\n")
    w.writerow(["label", "f0", "f1", "f2"])
    for r in quoted:
        w.writerow(r)
    text_case("quoted.csv", out.getvalue(), ",")
    # Everything at once: BOM, CRLF, quoted label and feature cells, label column not first.
    out = io.StringIO()
    w = csv.writer(out, quoting=csv.QUOTE_ALL, lineterminator="\n")
    w.writerow(["f0", "f1", "label", "f2"])
    for r in quoted:
        w.writerow([r[1], r[2], r[0], r[3]])
    text_case("everything.csv", out.getvalue(), ",", bom=True, newline="\r\n")

    with open(os.path.join(ODD, "expected.json"), "w") as f:
        json.dump(expected, f, indent=1, sort_keys=True)
        f.write("\n")
    return expected


if __name__ == "__main__":
    bad = make_bad()
    odd = make_odd()
    print(f"catalogue: {len(bad)} broken cases in tests/bad, {len(odd)} odd cases in tests/odd")
