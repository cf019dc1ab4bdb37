"""The e-mail report: the summary as the body, the full report attached once.

Structure of the message :func:`build_message` returns::

    multipart/mixed
      multipart/alternative
        text/plain                 the summary: verdicts, deciding findings, requirements, hazards, cautions
                                   (lines wrapped at 78 columns)
        text/html                  the same summary, its styles inlined for mail clients (css-inline)
      application/pdf | text/html  the full report (charts, findings, requirements, appendix), attached once

Mail readers drop ``<style>`` blocks and inline SVG, so the body carries no chart: the charts travel in the
attachment (PDF when WeasyPrint is installed, else the self-contained HTML report). A message larger than the
size guard (10 MB by default) is refused with a message that says how to make it smaller (leave the charts and
details out, or attach the HTML). :func:`send` delivers it over SMTP and turns every connection, TLS and login
failure into one :class:`MailError` whose message never contains the password. :func:`describe` says what would
be sent without connecting (a dry run). Credentials are the caller's business (environment or configuration),
never a spec's.
"""

from __future__ import annotations

import email.errors
import smtplib
import socket
import ssl
from collections.abc import Mapping, Sequence
from email import policy
from email.headerregistry import Address
from email.message import EmailMessage
from email.utils import formatdate, make_msgid
from typing import Any

from rulecheck.report import cautions, common, html
from rulecheck.report.common import plain

__all__ = ["MAX_BYTES", "SECURITY_MODES", "MailError", "MailTooLarge", "inline_styles",
           "as_bytes", "build_message", "describe", "send", "text_body"]

SECURITY_MODES = ("starttls", "tls", "none")
ATTACHMENT_NAME = "rulecheck-report.html"
PDF_ATTACHMENT_NAME = "rulecheck-report.pdf"
MAX_BYTES = 10 * 1024 * 1024  # the size guard: many mail servers refuse messages above 10 MB to 25 MB
WIDTH = 78  # RFC 5322 2.1.1: lines SHOULD be no more than 78 characters


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
    """Return the plain-text summary (every line at most 78 columns): each drive train's verdict and the findings
    that decide it, not-checked and waived rules, its requirements, then the hazards and the cautions. The full
    report (values, formulas, bases, charts) is the attachment."""
    specs = common.sorted_specs(result.get("specs") or [])
    tool = result.get("tool") if isinstance(result.get("tool"), Mapping) else {}
    lines = ["DRIVE-TRAIN DESIGN-RULE SUMMARY", *_wrap(common.summary_line(result)), ""]
    lines += _wrap(f"Tool {plain(tool.get('name'), 40) or 'rulecheck'} {plain(tool.get('version'), 40)}, "
                   f"rule set {plain(tool.get('rules_digest'), 100) or 'not stated'}, "
                   f"generated {plain(result.get('generated'), 40) or 'not stated'}.")
    lines += _wrap("Screening aid only, not an approval. See CAUTIONS at the end; the full report (values, "
                   "formulas, bases, charts) is attached.")
    lines += ["", *_wrap(common.ORDER_STATEMENT)]
    for spec in specs:
        lines += _spec_section(spec, units)
    lines += ["", "=" * WIDTH, "CAUTIONS"]
    for h in cautions.select_hazards(specs):
        lines += _wrap(f"- [!] {h.hazard.title}. {h.hazard.text} (Raised by {h.reason}.)")
    for c in cautions.GENERAL:
        lines += _wrap(f"- {c.title}. {c.text}")
    return "\n".join(lines) + "\n"


def _spec_section(spec: Mapping[str, Any], units: str) -> list[str]:
    """Return the text of one drive train: verdict, findings, what was not checked or waived, requirements."""
    groups = common.group_outcomes(spec)
    c = common.counts(spec)
    lines = ["", "=" * WIDTH, *_wrap(f"{common.verdict_label(spec).text}  {common.spec_name(spec)}")]
    lines += _wrap(f"file {plain(spec.get('file'), 200)}; errors {c['error']}, warnings {c['warning']}, "
                   f"notes {c['info']}, not checked {c['not-checked']}, waived {c['waived']}, passed {c['pass']}")
    if spec.get("cases"):
        lines += _wrap("load cases (the worst decides): " + ", ".join(
            f"{plain(k.get('name'), 40)} {plain(k.get('verdict'), 20)}" for k in spec["cases"]))
    for o in groups.failures:
        flag = " [SAFETY]" if o.get("safety") is True else ""
        lines += _wrap(f"{common.outcome_label(o).text}{flag} {plain(o.get('rule'), 80)}{common.case_label(o)}: "
                       f"{plain(o.get('message') or o.get('title'))}", "  ")
        if o.get("fix"):
            lines += _wrap(f"FIX: {plain(o.get('fix'))}", "      ")
    for o in groups.not_checked:
        missing = ", ".join(common.missing_items(o)) or "—"
        lines += _wrap(f"[?] not checked ({plain(o.get('severity'), 20)}) {plain(o.get('rule'), 80)}"
                       f"{common.case_label(o)}: "
                       f"needs {missing}", "  ")
    for o in groups.waived:
        w = common.waiver_items(o)
        lines += _wrap(f"[W] waived {plain(o.get('rule'), 80)}{common.case_label(o)}: {w['reason']} (approved by "
                       f"{w['approved_by'] or '—'}, expires {w['expires'] or '—'})", "  ")
    rows = spec.get("requirements") if isinstance(spec.get("requirements"), list) else []
    if rows:
        lines += ["", "  What it needs (needed / rating or limit / margin):"]
        for r in rows:
            if not isinstance(r, Mapping):
                continue
            rating = common.display(r["rating"], units) if isinstance(r.get("rating"), Mapping) else "not stated"
            margin = common.display(r["margin"], units, ratio=True) if isinstance(r.get("margin"), Mapping) else "—"
            at = f" at {common.display(r['at'], units)}" if isinstance(r.get("at"), Mapping) else ""
            sense = "max " if r.get("sense") == "at-most" and r.get("rating") else ""
            lines += _wrap(f"- {plain(r.get('item'), 120)}: {common.display(r.get('needed'), units)}{at} / "
                           f"{sense}{rating} / {margin} ({plain(r.get('outcome'), 20)})", "    ")
    return lines


class MailTooLarge(MailError):
    """The message is larger than the size guard."""


def build_message(result: dict, *, sender: str, recipients: str | Sequence[str], subject: str | None = None,
                  units: str = "si", attach: str | None = None, details: bool = True,
                  meta: Mapping[str, Any] | None = None, max_bytes: int | None = MAX_BYTES) -> EmailMessage:
    """Return the report as an e-mail: the summary as text and inline-styled HTML, the full report attached once.

    ``attach`` is ``"pdf"`` or ``"html"`` (default: PDF when WeasyPrint is installed, else HTML); ``details=False``
    leaves the charts, chart data, passes and derived values out of the attachment. ``max_bytes`` is the size
    guard (None: none): a larger message raises :class:`MailTooLarge` saying how to make it smaller.
    """
    from_ = _addresses(sender, "sender")
    to = _addresses(recipients, "recipient")
    msg = EmailMessage(policy=policy.SMTP)
    msg["From"] = from_[0]
    msg["To"] = ", ".join(to)
    msg["Subject"] = _header_text(subject, 200) if subject else default_subject(result)
    msg["Date"] = formatdate(localtime=False, usegmt=True)
    domain = from_[0].rsplit("@", 1)[-1].strip(">").strip() or "localhost"
    msg["Message-ID"] = make_msgid(domain=domain)
    msg.set_content(text_body(result, units=units), subtype="plain", charset="utf-8")
    msg.add_alternative(inline_styles(html.render_summary(result, units=units, meta=meta)), subtype="html",
                        charset="utf-8")
    kind, data = _attachment(result, units=units, attach=attach, details=details, meta=meta)
    if kind == "pdf":
        msg.add_attachment(data, maintype="application", subtype="pdf", filename=PDF_ATTACHMENT_NAME)
    else:
        msg.add_attachment(data.decode("utf-8"), subtype="html", charset="utf-8", filename=ATTACHMENT_NAME)
    size = len(as_bytes(msg))
    if max_bytes is not None and size > max_bytes:
        hint = "leave the charts and details out of the attachment (--no-details)" if details else (
            "check fewer drive trains per message")
        raise MailTooLarge(f"the e-mail would be {size / 2**20:.1f} MB, above the {max_bytes / 2**20:.1f} MB limit "
                           f"(--max-size): {hint}, or raise --max-size if the mail server accepts more")
    return msg


def inline_styles(page: str) -> str:
    """Return an HTML page with its ``<style>`` rules moved into ``style`` attributes, which mail readers keep
    (many drop ``<style>`` blocks); css-inline does the CSS cascade. Nothing is fetched."""
    import css_inline

    inliner = css_inline.CSSInliner(load_remote_stylesheets=False, keep_style_tags=False)
    return inliner.inline(page)


def _attachment(result: dict, *, units: str, attach: str | None, details: bool,
                meta: Mapping[str, Any] | None) -> tuple[str, bytes]:
    from rulecheck.report import pdf

    if attach not in (None, "pdf", "html"):
        raise MailError(f"attach must be 'pdf' or 'html', not {plain(attach, 20)!r}")
    if attach == "pdf" or (attach is None and pdf.available()):
        try:
            return "pdf", pdf.render(result, units=units, charts=details, meta=meta, details=details)
        except pdf.PdfUnavailable as exc:
            raise MailError(f"{exc}; or attach the HTML report (--attach html)") from None
    return "html", html.render(result, units=units, charts=details, meta=meta, details=details).encode("utf-8")


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
