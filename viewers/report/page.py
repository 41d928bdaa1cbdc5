"""The report as one self-contained HTML page (pictures inline as data URIs, the 3D view inline
in an iframe's srcdoc): the same text for the browser and, without the 3D view, for the PDF.
Every number comes from physics.analysis.report_content; this module only lays it out."""
from __future__ import annotations

import base64
import html
import mimetypes
from pathlib import Path

SECTIONS = ("cover", "pictures", "traps", "plots", "safety", "basis")  # each starts a PDF page

CSS = """
@page { size: A4; margin: 16mm 15mm 18mm 15mm;
  @bottom-left { content: string(docref); font: 8pt sans-serif; color: #555; }
  @bottom-right { content: "page " counter(page) " of " counter(pages);
                  font: 8pt sans-serif; color: #555; } }
body { font: 10pt/1.35 "DejaVu Sans", sans-serif; color: #1c1c1c; margin: 0 auto;
       max-width: 190mm; padding: 0 4mm; }
h1 { font-size: 19pt; margin: 0 0 1mm 0; }
h2 { font-size: 13pt; margin: 0 0 2mm 0; border-bottom: 1px solid #999; padding-bottom: 1mm; }
h3 { font-size: 10.5pt; margin: 3mm 0 1mm 0; }
section { page-break-before: always; margin-bottom: 8mm; }
section.cover { page-break-before: avoid; }
.docref { string-set: docref content(); display: none; }
.subtitle { color: #444; margin-bottom: 3mm; }
.answer { background: #eef4ea; border-left: 4px solid #1b7837; padding: 2mm 3mm;
          margin: 2mm 0 3mm 0; }
.answer p { margin: 1mm 0; }
.headline { font-weight: bold; }
.warning { color: #8a3b00; }
table { border-collapse: collapse; width: 100%; margin: 1mm 0 2mm 0; font-size: 9pt; }
th, td { text-align: left; vertical-align: top; padding: 0.7mm 1.5mm;
         border-bottom: 1px solid #ddd; }
th { background: #f0f0f0; }
table.facts th { width: 34%; background: none; font-weight: normal; color: #444; }
td.hash { font-family: "DejaVu Sans Mono", monospace; font-size: 7.5pt; word-break: break-all; }
img.picture { width: 100%; max-height: 118mm; object-fit: contain; display: block;
              margin: 1mm auto; }
img.logo { float: right; max-height: 18mm; max-width: 50mm; }
.caption { font-size: 8.5pt; color: #444; margin: 0 0 3mm 0; }
ul.cautions li, ul.plain li { margin-bottom: 1mm; }
iframe.view3d { width: 100%; height: 600px; border: 1px solid #bbb; }
.units { font-size: 8.5pt; color: #444; }
@media print { iframe.view3d { display: none; } }
"""


def data_uri(path) -> str:
    """A file as a data: URI (the page carries its pictures)."""
    path = Path(path)
    kind = mimetypes.guess_type(path.name)[0] or "application/octet-stream"
    return f"data:{kind};base64,{base64.b64encode(path.read_bytes()).decode('ascii')}"


def _e(text) -> str:
    return html.escape(str(text))


def _facts(rows, hash_rows=()) -> str:
    cells = "".join(f"<tr><th>{_e(label)}</th><td{' class=hash' if label in hash_rows else ''}>"
                    f"{_e(value)}</td></tr>" for label, value in rows)
    return f'<table class="facts">{cells}</table>'


def cover_section(content) -> str:
    cover = content.cover
    logo = f'<img class="logo" src="{data_uri(cover.logo)}" alt="logo">' if cover.logo else ""
    reference = " · ".join(f"{label} {value}" for label, value in cover.document) or cover.title
    answers = "".join(f"<p>{_e(a)}</p>" for a in content.answers)
    warnings = "".join(f'<p class="warning">{_e(w)}</p>' for w in content.warnings)
    parts = "; ".join(f"{count} x {kind}" for count, kind in cover.parts)
    assembly = [("Parts", parts or "none"), ("Grades", ", ".join(cover.grades) or "-"),
                ("Total magnet mass", cover.total_mass), ("Probe", cover.probe),
                ("How the probe moves", cover.constraint)]
    return (
        f'<section class="cover" id="cover"><span class="docref">{_e(reference)}</span>{logo}'
        f"<h1>{_e(cover.title)}</h1>"
        '<div class="subtitle">Customer report: where a small part is caught by this magnet '
        "assembly, how firmly it is held, and how to handle and ship it safely.</div>"
        + (_facts(cover.document) if cover.document else "")
        + '<h2>The answer</h2><div class="answer">'
        f'<p class="headline">{_e(content.headline)}</p>{answers}{warnings}</div>'
        f"<h2>The assembly</h2>{_facts(assembly)}"
        f"<h3>Traceability</h3>{_facts(cover.traceability, hash_rows=('Scene hash (sha256)',))}"
        f'<p class="units">Units in this report: {_e(content.units.words())}. The JSON outputs '
        "of trapscape stay in SI units.</p></section>")


def pictures_section(pictures) -> str:
    return (
        '<section id="pictures"><h2>The assembly and its traps</h2>'
        f'<img class="picture" src="{data_uri(pictures["overview"])}" alt="overview">'
        '<p class="caption">Overview: the magnets (north faces dark, lettered N), the field '
        "strength on a section through the main trap, the probe's guide and its equilibria "
        "(filled sphere: stable rest point; ring: unstable; diamond: saddle).</p>"
        f'<img class="picture" src="{data_uri(pictures["section"])}" alt="section">'
        '<p class="caption">The section through the main trap seen face on, with the parts in '
        "front of it cut away.</p></section>")


def interactive_section(page_text: str) -> str:
    return (
        '<section id="view3d" class="screen-only"><h2>Interactive 3D view</h2>'
        '<p class="caption">Drag to turn, wheel to zoom. It runs inside this file and fetches '
        "nothing from the network.</p>"
        f'<iframe class="view3d" title="interactive 3D view" '
        f'srcdoc="{html.escape(page_text, quote=True)}"></iframe></section>')


def traps_section(content, pictures) -> str:
    rows = "".join(
        f"<tr><td>{r.number}</td><td>{r.count}</td><td>{_e(r.kind)}</td><td>{_e(r.position)}</td>"
        f"<td>{_e(r.escape_force)}</td><td>{_e(r.times_weight)}</td><td>{_e(r.field)}</td>"
        f"<td>{_e(r.resting_on)}</td></tr>" for r in content.families)
    units = content.units
    table = (f"<table><tr><th>#</th><th>count</th><th>class</th><th>position</th>"
             f"<th>escape force ({_e(units.force_label)})</th><th>x weight</th>"
             f"<th>|B| ({_e(units.field_label)})</th><th>resting on</th></tr>{rows}</table>"
             if rows else "<p>No equilibrium was found in the search box.</p>")
    return (
        '<section id="traps"><h2>Polarity and trap families</h2>'
        f'<img class="picture" src="{data_uri(pictures["polarity"])}" alt="polarity map">'
        '<p class="caption">Polarity map: the parts seen from above, numbered, with the face '
        "that is north.</p>"
        "<h3>Trap families</h3>"
        '<p class="caption">A family is one answer: equilibria that are images of each other '
        "under the assembly's symmetry, points of one circle, or neighbouring points of one "
        "contact curve. The escape force is the push that moves the probe out of its trap the "
        "easiest way.</p>"
        f"{table}</section>")


def plots_section(pictures, content) -> str:
    body = ""
    if "profile" in pictures:
        body += (f'<img class="picture" src="{data_uri(pictures["profile"])}" alt="profile">'
                 '<p class="caption">Energy of the probe (top) and the force on it along the '
                 "line (bottom, field and gravity together). A trap sits where the force "
                 "crosses zero from positive to negative; the push that dislodges the probe is "
                 "the largest force it meets on the way out, here compared with its weight "
                 "(dashed).</p>")
    if "pull" in pictures:
        body += (f'<img class="picture" src="{data_uri(pictures["pull"])}" alt="pull">'
                 f'<p class="caption">{_e(content.pull.note)}</p>')
    if not body:
        body = "<p>The probe fits nowhere on the line through the main trap.</p>"
    return f'<section id="plots"><h2>Energy and force</h2>{body}</section>'


def safety_section(content) -> str:
    cautions = "".join(f"<li>{_e(c)}</li>" for c in content.cautions)
    basis = "".join(f"<li>{_e(u)}</li>" for u in content.uncertainty)
    notes = "".join(f"<li>{_e(n)}</li>" for n in content.notes)
    notes = f'<h3>Notes of the trap search</h3><ul class="plain">{notes}</ul>' if notes else ""
    return (
        '<section id="safety"><h2>Safety, handling and shipping</h2>'
        '<p class="caption">The magnets alone, off any steel plate; estimates from an idealised '
        "model.</p>"
        f"{_facts(content.safety)}<h3>Shipping by air</h3>{_facts(content.shipping)}"
        f'<h3>Cautions</h3><ul class="cautions">{cautions}</ul></section>'
        f'<section id="basis"><h2>What these figures rest on</h2><ul class="plain">{basis}</ul>'
        f"{notes}</section>")


def report_page(content, pictures: dict, interactive: str | None = None) -> str:
    """The whole report as HTML text.

    Parameters
    ----------
    content : trapscape.physics.analysis.report_content.ReportContent
    pictures : dict of str to path
        overview, section, polarity, and profile and pull where there are such plots.
    interactive : str or None
        The 3D view's page (viewers.report.pictures.interactive_page), or None to leave it out
        (the PDF, or --no-3d).

    Returns
    -------
    str
    """
    sections = [cover_section(content), pictures_section(pictures)]
    if interactive is not None:
        sections.append(interactive_section(interactive))
    sections += [traps_section(content, pictures), plots_section(pictures, content),
                 safety_section(content)]
    return ("<!DOCTYPE html><html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{_e(content.cover.title)} (trapscape report)</title>"
            f"<style>{CSS}</style></head><body>{''.join(sections)}</body></html>")
