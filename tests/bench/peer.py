#!/usr/bin/env python3
"""peer: the script a designer would write instead of biaslint, for the benchmark's comparison.

    peer.py NETLIST DUMP.csv ANNOTATED REPORT.json

Standard library only, written the straightforward way: read a flat netlist (title line, comments,
`+` continuations, .param, .model, M cards with w l m nf as numbers with SPICE suffixes or as {...}
and '...' expressions of the parameters), read the CSV device table with the csv module, join the
two by device name in a dict, normalize the signs as biaslint does for a CSV dump, compute the same
figures (gm/ID, ID/W, gm/gds, fT, VOV, VDS-VDSAT, region) and the same default checks (sat-margin
50 mV error, triode error, off below 100 pA per square warning, gain below 10 warning, no data
warning), write the netlist with a comment line after each MOSFET card, and dump a JSON report.
It reads flat netlists only (no .subckt), which is what the benchmark gives it. It is a yardstick,
not a second implementation: the messages are shorter than biaslint's.
"""
import csv
import json
import math
import re
import sys

SUFFIXES = [("meg", 1e6), ("mil", 25.4e-6), ("t", 1e12), ("g", 1e9), ("k", 1e3), ("m", 1e-3),
            ("u", 1e-6), ("n", 1e-9), ("p", 1e-12), ("f", 1e-15)]
NUMBER = re.compile(r"^([+-]?(?:\d+\.?\d*|\.\d+)(?:e[+-]?\d+)?)([a-z]*)$")

STRONG_BELOW, WEAK_ABOVE, OFF_BELOW = 12.0, 20.0, 100e-12  # the defaults of rules/defaults.rules
MIN_MARGIN, MIN_GAIN = 0.05, 10.0


def spice_number(text):
    m = NUMBER.match(text.lower())
    if not m:
        raise ValueError("not a number: " + text)
    value, unit = float(m.group(1)), m.group(2)
    for suffix, scale in SUFFIXES:
        if unit.startswith(suffix):
            return value * scale
    return value


def evaluate(text, params):
    text = text.strip()
    if text[:1] in "{'" and text[-1:] in "}'":
        expr = text[1:-1]
        expr = re.sub(r"(\d+\.?\d*(?:e[+-]?\d+)?)(meg|mil|[tgkmunpf])[a-z]*",
                      lambda m: repr(spice_number(m.group(1) + m.group(2))), expr, flags=re.I)
        return float(eval(expr, {"__builtins__": {}}, params))
    return spice_number(text)


def logical_lines(lines):
    """(first line number, text) of each card, continuations joined; the title line skipped."""
    card, first = None, 0
    for number, line in enumerate(lines[1:], start=2):
        stripped = line.strip()
        if not stripped or stripped[0] in "*$;":
            continue
        if stripped.startswith("+"):
            if card is not None:
                card += " " + stripped[1:]
            continue
        if card is not None:
            yield first, card
        card, first = stripped, number
    if card is not None:
        yield first, card


def read_netlist(path):
    with open(path) as f:
        lines = f.read().split("\n")
    params, models, devices = {}, {}, []
    last_line = {}
    for number, card in logical_lines(lines):
        words = re.split(r"\s+", re.sub(r"\s*=\s*", "=", card))
        head = words[0].lower()
        if head == ".param":
            for word in words[1:]:
                name, value = word.split("=", 1)
                params[name.lower()] = evaluate(value, params)
        elif head == ".model":
            models[words[1].lower()] = words[2].lower()
        elif head == ".end":
            break
        elif head.startswith("m"):
            values = {"w": None, "l": None, "m": 1.0, "nf": 1.0}
            for word in words[6:]:
                if "=" in word:
                    name, value = word.split("=", 1)
                    if name.lower() in values:
                        values[name.lower()] = evaluate(value, params)
            devices.append({"name": head, "model": words[5].lower(), "line": number, **values})
    for dev in devices:
        dev["type"] = models.get(dev["model"], "unknown")
    # the last physical line of each card, to put the comment after it
    for dev in devices:
        end = dev["line"]
        while end < len(lines) and lines[end].lstrip().startswith("+"):
            end += 1
        last_line[end] = last_line.get(end, []) + [dev]
    return lines, devices, last_line


def read_dump(path):
    records = {}
    with open(path, newline="") as f:
        rows = csv.DictReader(line for line in f if not line.startswith("#"))
        for row in rows:
            name = row["name"].lower()
            if name.startswith("m."):
                name = name[2:]
            values = {}
            for key in ("id", "gm", "gds", "vgs", "vds", "vbs", "vth", "vdsat", "cgg"):
                text = row.get(key, "")
                values[key] = float(text) if text not in ("", None) else None
            records[name] = values
    return records


def ratio(a, b):
    if a is None or b is None or b == 0:
        return None
    return a / b


def figures(dev, rec):
    id_ = abs(rec["id"]) if rec["id"] is not None else None
    vth, vdsat = rec["vth"], rec["vdsat"]
    vdsat = abs(vdsat) if vdsat is not None else None
    if dev["type"] == "pmos" and vth is not None and vth < 0:
        vth = -vth
    vgs, vds, vbs = rec["vgs"], rec["vds"], rec["vbs"]
    swapped = vds is not None and vds < 0
    if swapped:
        vgs = vgs - vds if vgs is not None else None
        vbs = vbs - vds if vbs is not None else None
        vds = -vds
    cgg = abs(rec["cgg"]) if rec["cgg"] is not None else None
    w, l, m = dev["w"], dev["l"], dev["m"]
    fig = {"id": id_, "gm": rec["gm"], "gds": rec["gds"], "vgs": vgs, "vds": vds,
           "vsb": -vbs if vbs is not None else None, "vth": vth, "vdsat": vdsat, "cgg": cgg}
    fig["gm_id"] = ratio(rec["gm"], id_)
    fig["id_w"] = ratio(id_, w * m) if w and m else None
    fig["gain"] = ratio(rec["gm"], rec["gds"])
    fig["ft"] = ratio(rec["gm"], 2 * math.pi * cgg) if cgg else None
    fig["vov"] = vgs - vth if vgs is not None and vth is not None else None
    fig["margin"] = vds - vdsat if vds is not None and vdsat is not None else None
    per_square = fig["id_w"] * l if fig["id_w"] is not None and l else None
    if id_ is None:
        region = "unknown"
    elif id_ == 0 or (per_square is not None and per_square < OFF_BELOW):
        region = "off"
    elif fig["margin"] is not None and fig["margin"] < 0:
        region = "triode"
    elif fig["margin"] is None or fig["gm_id"] is None or fig["gm_id"] <= 0:
        region = "unknown"
    elif fig["gm_id"] > WEAK_ABOVE:
        region = "weak"
    elif fig["gm_id"] < STRONG_BELOW:
        region = "strong"
    else:
        region = "moderate"
    fig["region"] = region
    fig["swapped"] = swapped
    return fig, per_square


def checks(dev, fig, per_square):
    found = []
    if fig is None:
        return [("no-data", "warning", None, None, "no operating-point data")]
    if fig["region"] == "off":
        return [("off", "warning", per_square, OFF_BELOW, "ID per square %.3g A: the device is off" % (per_square or 0))]
    if fig["margin"] is not None:
        if fig["margin"] < 0:
            found.append(("triode", "error", fig["margin"], 0.0, "VDS-VDSAT = %.3g V: the device is in triode" % fig["margin"]))
        elif fig["margin"] < MIN_MARGIN:
            found.append(("sat-margin", "error", fig["margin"], MIN_MARGIN, "VDS-VDSAT is %.3g V, below %.3g V" % (fig["margin"], MIN_MARGIN)))
    if fig["gain"] is not None and fig["gain"] < MIN_GAIN:
        found.append(("gain", "warning", fig["gain"], MIN_GAIN, "gm/gds is %.3g, below %.3g" % (fig["gain"], MIN_GAIN)))
    return found


def eng(value, unit):
    if value is None:
        return "-"
    if value == 0:
        return "0" + unit
    exp3 = int(math.floor(math.log10(abs(value)) / 3)) * 3
    prefixes = {-15: "f", -12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}
    if exp3 not in prefixes:
        return "%.3g%s" % (value, unit)
    return "%.3g%s%s" % (value / 10 ** exp3, prefixes[exp3], unit)


def main():
    netlist, dump, annotated, report_path = sys.argv[1:5]
    lines, devices, last_line = read_netlist(netlist)
    records = read_dump(dump)
    report = {"tool": "peer.py", "netlist": netlist, "op": dump, "devices": [], "findings": []}
    notes = {}
    counts = {"error": 0, "warning": 0, "info": 0}
    for dev in devices:
        rec = records.get(dev["name"])
        fig, per_square = figures(dev, rec) if rec else (None, None)
        entry = {"name": dev["name"], "model": dev["model"], "type": dev["type"], "w": dev["w"], "l": dev["l"],
                 "m": dev["m"], "nf": dev["nf"], "file": netlist, "line": dev["line"], "has_data": rec is not None}
        entry.update(fig or {})
        report["devices"].append(entry)
        found = checks(dev, fig, per_square)
        for check, severity, value, limit, message in found:
            counts[severity] += 1
            report["findings"].append({"device": dev["name"], "check": check, "severity": severity, "value": value,
                                       "limit": limit, "message": message, "file": netlist, "line": dev["line"]})
        if fig:
            text = "*~ [%s] %s | gm/ID %s | gain %s | margin %s | ID %s | fT %s" % (
                dev["name"], fig["region"], "%.3g/V" % fig["gm_id"] if fig["gm_id"] is not None else "-",
                "%.3g" % fig["gain"] if fig["gain"] is not None else "-", eng(fig["margin"], "V"), eng(fig["id"], "A"),
                eng(fig["ft"], "Hz"))
        else:
            text = "*~ [%s] no operating-point data" % dev["name"]
        notes[dev["name"]] = [text] + ["*~ [%s] %s %s: %s" % (dev["name"], sev, check, msg)
                                       for check, sev, _, _, msg in found]
    with open(annotated, "w") as f:
        for number, line in enumerate(lines, start=1):
            if line.startswith("*~"):
                continue
            f.write(line + ("\n" if number < len(lines) else ""))
            for dev in last_line.get(number, []):
                for note in notes[dev["name"]]:
                    f.write(note + "\n")
    report["summary"] = {"devices": len(devices), "errors": counts["error"], "warnings": counts["warning"],
                         "infos": counts["info"], "matched": sum(1 for d in devices if d["name"] in records)}
    with open(report_path, "w") as f:
        json.dump(report, f, indent=2)
    print("%d devices, %d errors, %d warnings" % (len(devices), counts["error"], counts["warning"]))
    return 1 if counts["error"] else 0


if __name__ == "__main__":
    sys.exit(main())
