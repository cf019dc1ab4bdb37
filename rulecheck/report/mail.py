"""The e-mail report: a MIME message with text and HTML alternatives, inline chart images and the full report.

Structure of the message :func:`build_message` returns::

    multipart/mixed
      multipart/alternative
        text/plain                 summary, findings, not-checked rules, chart text equivalents, cautions
        multipart/related
          text/html                the report, charts as <img src="cid:...">
          image/png ...            one per chart, Content-ID matching the cid: reference
      text/html (attachment)       the full self-contained report (inline SVG charts)

:func:`send` delivers it over SMTP and turns every connection, TLS and login
failure into one :class:`MailError` whose message never contains the password.
:func:`describe` says what would be sent without connecting (a dry run).
Credentials are the caller's business (environment or configuration), never a spec's.
"""

from __future__ import annotations

import email.errors
import hashlib
import smtplib
import socket
import ssl
from collections.abc import Mapping, Sequence
from email import policy
from email.headerregistry import Address
from email.message import EmailMessage
from email.utils import formatdate, make_msgid
from typing import Any

from rulecheck.report import cautions, charts, common, html
from rulecheck.report.common import plain

__all__ = ["SECURITY_MODES", "MailError", "as_bytes", "build_message", "describe", "send", "text_body"]

SECURITY_MODES = ("starttls", "tls", "none")
ATTACHMENT_NAME = "rulecheck-report.html"


class MailError(Exception):
    """Building or sending the e-mail failed; ``str()`` is a one-line message for people."""


def _header_text(text: Any, limit: int = 200) -> str:
    """Return text safe for a header value: one line, no control characters (no header injection)."""
    return plain(text, limit)


def _addresses(value: str | Sequence[str], what: str) -> list[str]:
    items = [value] if isinstance(value, str) else list(value)
    out = []
    for item in items:
        text = _header_text(item, 320)
        if not text or "@" not in text:
            raise MailError(f"{what} address {text!r} is not an e-mail address")
        try:
            Address(addr_spec=text.split("<")[-1].rstrip(">").strip())
        except (ValueError, IndexError, email.errors.MessageError) as exc:
            raise MailError(f"{what} address {text!r} is not valid: {exc}") from None
        out.append(text)
    if not out:
        raise MailError(f"no {what} address given")
    return out


def default_subject(result: Mapping[str, Any]) -> str:
    """Return the subject line: the summary, and the tag when there is one drive train."""
    specs = [s for s in (result.get("specs") or []) if isinstance(s, Mapping)]
    line = common.summary_line(result)
    if len(specs) == 1:
        line = f"{common.verdict_label(specs[0]).word} {plain(specs[0].get('tag') or specs[0].get('file'), 60)}: " \
               f"{line}"
    return _header_text(f"Drive-train rule check — {line}", 160)


def _wrap(text: str, indent: str = "", width: int = 78) -> list[str]:
    import textwrap

    return textwrap.wrap(text, width=width, initial_indent=indent, subsequent_indent=indent + "  ") or [indent]


def text_body(result: Mapping[str, Any], *, units: str = "si") -> str:
    """Return the plain-text version of the report (text), with chart text equivalents and the cautions."""
    specs = common.sorted_specs(result.get("specs") or [])
    tool = result.get("tool") if isinstance(result.get("tool"), Mapping) else {}
    lines = ["DRIVE-TRAIN DESIGN-RULE REPORT", common.summary_line(result), ""]
    lines.append(f"Tool {plain(tool.get('name'), 40) or 'rulecheck'} {plain(tool.get('version'), 40)}, "
                 f"rule set {plain(tool.get('rules_digest'), 100) or 'not stated'}, "
                 f"generated {plain(result.get('generated'), 40) or 'not stated'}.")
    lines.append("Screening aid only, not an approval. See CAUTIONS at the end.")
    lines += ["", common.ORDER_STATEMENT, ""]
    for spec in specs:
        c = common.counts(spec)
        lines.append(f"  {common.verdict_label(spec).text:<16} {common.spec_name(spec)}")
        lines.append(f"  {'':<16} errors {c['error']}, warnings {c['warning']}, info {c['info']}, "
                     f"not checked {c['not-checked']}, waived {c['waived']}, pass {c['pass']}")
    for spec in specs:
        lines += _spec_section(spec, units)
    lines += ["", "=" * 78, "CAUTIONS"]
    for c in cautions.GENERAL:
        lines += _wrap(f"- {c.title}. {c.text}")
    for h in cautions.select_hazards(specs):
        lines += _wrap(f"- [!] {h.hazard.title}. {h.hazard.text} (Raised by {h.reason}.)")
    return "\n".join(lines) + "\n"


def _spec_section(spec: Mapping[str, Any], units: str) -> list[str]:
    """Return the text of one spec's section: its findings, what was not checked or waived, its charts."""
    groups = common.group_outcomes(spec)
    lines = ["", "=" * 78, f"{common.verdict_label(spec).text}  {common.spec_name(spec)}"]
    lines.append(f"file {plain(spec.get('file'), 200)}  sha256 {plain(spec.get('sha256'), 80)}")
    lines.append(f"spec status {plain(spec.get('spec_status'), 40) or '—'}, check status "
                 f"{plain(spec.get('status'), 20) or '—'}")
    for o in groups.failures:
        lines += _failure_lines(o, units)
    if groups.not_checked:
        lines += ["", "Not checked (supply these inputs to have them checked):"]
        for o in groups.not_checked:
            missing = ", ".join(common.missing_items(o)) or "—"
            lines += _wrap(f"[?] ({plain(o.get('severity'), 20)}) {plain(o.get('rule'), 80)}: needs {missing}",
                           "  ")
    if groups.waived:
        lines += ["", "Waived:"]
        for o in groups.waived:
            w = common.waiver_items(o)
            lines += _wrap(f"[W] {plain(o.get('rule'), 80)}: {w['reason']} (approved by {w['approved_by'] or '—'},"
                           f" expires {w['expires'] or '—'})", "  ")
    for key in charts.available(spec):
        try:
            text = charts.describe(key, spec["charts"][key], units)
        except charts.ChartDataError as exc:
            lines += ["", f"[chart {key} could not be drawn: {exc}]"]
            continue
        title, description, *table = text.as_text().splitlines()
        lines += ["", title, *_wrap(description), *table]
    return lines


def _failure_lines(o: Mapping[str, Any], units: str) -> list[str]:
    """Return the text of one finding: label, message, values, limit, formula, basis, location and fix."""
    flag = " [SAFETY]" if o.get("safety") is True else ""
    lines = [""]
    lines += _wrap(f"{common.outcome_label(o).text}{flag} {plain(o.get('rule'), 80)}: "
                   f"{plain(o.get('message') or o.get('title'))}")
    for name, value in common.value_items(o, units):
        lines.append(f"    {name}: {value}")
    limit = common.display_limit(o, units)
    if limit:
        lines.append(f"    limit: {limit}")
    if o.get("formula"):
        lines.append(f"    formula: {plain(o.get('formula'), 300)}")
    for source, tag, words in common.basis_items(o):
        lines += _wrap(f"basis: {source} [{tag or '?'}: {words}]", "    ")
    where = common.location_text(o)
    if where:
        lines.append(f"    at: {where}")
    if o.get("fix"):
        lines += _wrap(f"FIX: {plain(o.get('fix'))}", "    ")
    return lines


def build_message(result: dict, *, sender: str, recipients: str | Sequence[str], subject: str | None = None,
                  units: str = "si") -> EmailMessage:
    """Return the report as an e-mail message: text and HTML alternatives, inline charts, full report attached."""
    from_ = _addresses(sender, "sender")
    to = _addresses(recipients, "recipient")
    msg = EmailMessage(policy=policy.SMTP)
    msg["From"] = from_[0]
    msg["To"] = ", ".join(to)
    msg["Subject"] = _header_text(subject, 200) if subject else default_subject(result)
    msg["Date"] = formatdate(localtime=False, usegmt=True)
    domain = from_[0].rsplit("@", 1)[-1].strip(">").strip() or "localhost"
    msg["Message-ID"] = make_msgid(domain=domain)

    images: list[tuple[str, bytes]] = []

    def image(number: int, key: str, data: Mapping[str, Any]) -> str:
        content = charts.png(key, data, units)
        cid = f"dt{number}-{key}.{hashlib.sha256(content).hexdigest()[:16]}@rulecheck"
        images.append((cid, content))
        return f"cid:{cid}"

    body_html = html.render(result, units=units, image=image)
    msg.set_content(text_body(result, units=units), subtype="plain", charset="utf-8")
    msg.add_alternative(body_html, subtype="html", charset="utf-8")
    html_part = msg.get_payload()[1]
    for cid, content in images:
        html_part.add_related(content, maintype="image", subtype="png", cid=f"<{cid}>",
                              filename=cid.split("@", 1)[0] + ".png", disposition="inline")
    msg.add_attachment(html.render(result, units=units), subtype="html", charset="utf-8", filename=ATTACHMENT_NAME)
    return msg


def as_bytes(message: EmailMessage) -> bytes:
    """Return the message as ``.eml`` bytes (CRLF line ends, as sent over SMTP)."""
    return message.as_bytes(policy=policy.SMTP)


def describe(message: EmailMessage) -> str:
    """Return a human-readable account of what would be sent (headers, parts, sizes), without connecting."""
    lines = ["Dry run: nothing is sent."]
    for name in ("From", "To", "Cc", "Subject", "Date", "Message-ID"):
        if message[name] is not None:
            lines.append(f"{name}: {message[name]}")
    total = len(as_bytes(message))

    def walk(part: EmailMessage, depth: int) -> None:
        pad = "  " * depth
        ctype = part.get_content_type()
        if part.is_multipart():
            lines.append(f"{pad}{ctype}")
            for sub in part.iter_parts():
                walk(sub, depth + 1)
            return
        size = len(part.get_payload(decode=True) or b"")
        extra = []
        if part.get_filename():
            extra.append(f"file {part.get_filename()}")
        if part["Content-ID"]:
            extra.append(f"Content-ID {part['Content-ID']}")
        if part.get_content_disposition():
            extra.append(part.get_content_disposition())
        lines.append(f"{pad}{ctype}, {size:,} bytes" + (f" ({'; '.join(extra)})" if extra else ""))

    lines.append("Parts:")
    walk(message, 1)
    lines.append(f"Total size: {total:,} bytes")
    return "\n".join(lines)


def send(message: EmailMessage, *, host: str, port: int, security: str = "starttls", username: str | None = None,
         password: str | None = None, timeout: float = 30.0) -> None:
    """Send ``message`` over SMTP; returns nothing, raises :class:`MailError` with a one-line reason on failure.

    ``security`` is ``"starttls"`` (plain connection upgraded to TLS, usually
    port 587), ``"tls"`` (TLS from the start, usually port 465) or ``"none"``.
    Certificates are verified against the system's trust store. With a
    ``username`` the client logs in after TLS is up.
    """
    if security not in SECURITY_MODES:
        raise MailError(f"security must be one of {', '.join(SECURITY_MODES)}, not {plain(security, 20)!r}")
    if not host or not isinstance(port, int) or not 0 < port < 65536:
        raise MailError(f"SMTP server {plain(host, 100)!r} port {plain(port, 10)!r} is not a valid address")
    if (username is None) != (password is None):
        raise MailError("SMTP login needs both a user name and a password")
    where = f"{plain(host, 100)}:{port}"
    context = ssl.create_default_context()
    client: smtplib.SMTP | None = None
    try:
        if security == "tls":
            client = smtplib.SMTP_SSL(host, port, timeout=timeout, context=context)
        else:
            client = smtplib.SMTP(host, port, timeout=timeout)
        client.ehlo()
        if security == "starttls":
            client.starttls(context=context)
            client.ehlo()
        if username is not None:
            client.login(username, password or "")
        refused = client.send_message(message)
    except OSError as exc:  # smtplib's and ssl's errors are OSErrors too
        raise _send_error(exc, where, host=host, security=security, username=username, timeout=timeout) from None
    finally:
        if client is not None:
            try:
                client.quit()
            except (smtplib.SMTPException, OSError):
                client.close()
    if refused:
        raise MailError(f"the SMTP server {where} accepted the message but refused: {', '.join(sorted(refused))}")


def _send_error(exc: OSError, where: str, *, host: str, security: str, username: str | None,
                timeout: float) -> MailError:
    """Return the one-line :class:`MailError` for what went wrong while sending (most specific cause first)."""
    if isinstance(exc, smtplib.SMTPAuthenticationError):
        return MailError(f"the SMTP server {where} refused the login for user {plain(username, 100)!r} "
                         f"({exc.smtp_code})")
    if isinstance(exc, smtplib.SMTPNotSupportedError):
        return MailError(f"the SMTP server {where} does not offer {security.upper()} or login as asked")
    if isinstance(exc, smtplib.SMTPRecipientsRefused):
        return MailError(f"the SMTP server {where} refused every recipient: {', '.join(exc.recipients)}")
    if isinstance(exc, smtplib.SMTPResponseException):
        text = exc.smtp_error.decode("utf-8", "replace") if isinstance(exc.smtp_error, bytes) else exc.smtp_error
        return MailError(f"the SMTP server {where} answered {exc.smtp_code}: {plain(text, 200)}")
    if isinstance(exc, smtplib.SMTPException):
        return MailError(f"sending through {where} failed: {plain(exc, 200)}")
    if isinstance(exc, ssl.SSLError):
        return MailError(f"TLS with {where} failed: {plain(exc.reason or exc, 200)}")
    if isinstance(exc, socket.gaierror):
        return MailError(f"the SMTP server name {plain(host, 100)!r} cannot be resolved")
    if isinstance(exc, ConnectionRefusedError):
        return MailError(f"the SMTP server {where} refused the connection (nothing listening?)")
    if isinstance(exc, TimeoutError):
        return MailError(f"the SMTP server {where} did not answer within {timeout:g} s")
    return MailError(f"cannot reach the SMTP server {where}: {plain(exc.strerror or exc, 200)}")
