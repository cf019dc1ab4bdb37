"""The e-mail report: MIME structure read back with the standard parser, and delivery to a local SMTP server."""

from __future__ import annotations

import re
import socket
import ssl
from email import policy
from email.parser import BytesParser

import pytest

from rulecheck.report import html, mail

from . import sample

SENDER = "rule checks <checks@harrowgate.example>"
RECIPIENTS = ["drives-review@harrowgate.example", "site.lead@harrowgate.example"]
USER, PASSWORD = "checks", "s3cret-Pa55word"


def _parse(data: bytes):
    return BytesParser(policy=policy.default).parsebytes(data)


@pytest.fixture(scope="module")
def plant_message():
    return mail.build_message(sample.plant(), sender=SENDER, recipients=RECIPIENTS, attach="html")


def test_structure_summary_alternatives_and_one_attachment(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    assert msg.get_content_type() == "multipart/mixed"
    alternative, attachment = list(msg.iter_parts())
    assert alternative.get_content_type() == "multipart/alternative"
    plain, html_part = list(alternative.iter_parts())
    assert plain.get_content_type() == "text/plain" and html_part.get_content_type() == "text/html"
    assert attachment.get_content_type() == "text/html"
    assert attachment.get_content_disposition() == "attachment"
    assert attachment.get_filename() == "rulecheck-report.html"
    # the full report travels once: the body is the summary, without charts or the appendix
    body = html_part.get_content()
    assert "Drive-train design-rule summary" in body and "<svg" not in body and "Passed (" not in body
    assert sum(1 for p in msg.walk() if p.get_filename()) == 1


def test_body_styles_are_inline_for_mail_readers(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    body = next(p for p in msg.walk() if p.get_content_type() == "text/html").get_content()
    assert "<style" not in body  # many mail readers drop style blocks
    assert re.search(r'<table class="index" style="[^"]*border-collapse: ?collapse', body)
    assert 'class="badge sev-error" style="' in body


def test_attachment_is_the_full_self_contained_report(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    attachment = list(msg.iter_parts())[1]
    # text parts travel with CRLF line ends (RFC 5322); the report itself is unchanged
    assert attachment.get_content().replace("\r\n", "\n") == html.render(sample.plant())


def test_pdf_attachment_when_asked(samples):
    pytest.importorskip("weasyprint", reason="the pdf extra (WeasyPrint) is not installed")
    message = mail.build_message(sample.plant(), sender=SENDER, recipients=RECIPIENTS, attach="pdf")
    attachment = list(_parse(mail.as_bytes(message)).iter_parts())[1]
    assert attachment.get_content_type() == "application/pdf"
    assert attachment.get_filename() == "rulecheck-report.pdf"
    assert attachment.get_content().startswith(b"%PDF-")


def test_text_part_is_the_summary_wrapped_at_78(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    text = next(p for p in msg.walk() if p.get_content_type() == "text/plain").get_content()
    flat = " ".join(text.split())
    for words in ("[X] ERROR [SAFETY] holding-brake-vertical", "FIX: add a spring-applied", "not checked",
                  "environment.altitude", "R. Okafor", "CAUTIONS", "NEC Article 430",
                  "Nobody works under a suspended load", "Permanent-magnet motors"):
        assert words in flat, words
    # RFC 5322 2.1.1: lines SHOULD be no more than 78 characters
    assert max(len(line) for line in text.splitlines()) <= 78


def test_size_guard_refuses_with_what_to_do():
    with pytest.raises(mail.MailTooLarge, match=r"above the 0\.0 MB limit.*--no-details"):
        mail.build_message(sample.plant(), sender=SENDER, recipients=RECIPIENTS, attach="html", max_bytes=1000)
    small = mail.build_message(sample.plant(), sender=SENDER, recipients=RECIPIENTS, attach="html", details=False)
    full = mail.build_message(sample.plant(), sender=SENDER, recipients=RECIPIENTS, attach="html")
    assert len(mail.as_bytes(small)) < len(mail.as_bytes(full))
    assert "<svg" not in list(_parse(mail.as_bytes(small)).iter_parts())[1].get_content()


def test_headers(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    assert msg["From"] == SENDER
    assert msg["To"] == ", ".join(RECIPIENTS)
    assert msg["Subject"] == "Drive-train rule check — 4 drive trains: 2 fail, 1 invalid, 1 warning"
    assert msg["Date"] and msg["Message-ID"].endswith("@harrowgate.example>")


def test_hostile_strings_cannot_inject_headers():
    message = mail.build_message(sample.result(sample.hostile()), sender=SENDER, recipients=RECIPIENTS[0])
    msg = _parse(mail.as_bytes(message))
    assert "<script>alert(1)</script>" in msg["Subject"]  # shown as text in a header, which is not markup
    message = mail.build_message(sample.result(sample.conveyor()), sender=SENDER, recipients=RECIPIENTS[0],
                                 subject="weekly\r\nBcc: victim@example.invalid")
    msg = _parse(mail.as_bytes(message))
    assert msg["Bcc"] is None and msg["Subject"] == "weekly Bcc: victim@example.invalid"
    html_part = next(p for p in msg.walk() if p.get_content_type() == "text/html")
    assert "<script>" not in html_part.get_content()


@pytest.mark.parametrize("sender,recipients", [("nobody", RECIPIENTS), (SENDER, []), (SENDER, ["a@b\nBcc: c@d"]),
                                               (SENDER, ["not an address"])])
def test_bad_addresses_are_refused(sender, recipients):
    with pytest.raises(mail.MailError):
        mail.build_message(sample.plant(), sender=sender, recipients=recipients)


def test_dry_run_describes_without_connecting(plant_message):
    text = mail.describe(plant_message)
    assert text.startswith("Dry run: nothing is sent.")
    assert "To: drives-review@harrowgate.example, site.lead@harrowgate.example" in text
    assert "multipart/alternative" in text and "file rulecheck-report.html; attachment" in text
    total = int(re.search(r"Total size: ([\d,]+) bytes", text).group(1).replace(",", ""))
    assert total == len(mail.as_bytes(plant_message))


# --- delivery to a local SMTP server -----------------------------------------


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class _Handler:
    def __init__(self) -> None:
        self.envelopes = []

    async def handle_DATA(self, server, session, envelope):  # noqa: N802 - aiosmtpd's hook name
        self.envelopes.append(envelope)
        return "250 Message accepted"


def _authenticator(server, session, envelope, mechanism, auth_data):
    from aiosmtpd.smtp import AuthResult, LoginPassword

    ok = isinstance(auth_data, LoginPassword) and auth_data.login == USER.encode() and \
        auth_data.password == PASSWORD.encode()
    return AuthResult(success=ok, handled=False)  # handled=False: the server answers 535 itself


@pytest.fixture
def smtp_server():
    from aiosmtpd.controller import Controller

    handler = _Handler()
    controller = Controller(handler, hostname="127.0.0.1", port=_free_port(), authenticator=_authenticator,
                            auth_required=False, auth_require_tls=False)
    controller.start()
    try:
        yield controller, handler
    finally:
        controller.stop()


def test_delivered_message_is_intact(smtp_server, plant_message):
    controller, handler = smtp_server
    mail.send(plant_message, host=controller.hostname, port=controller.port, security="none", timeout=10)
    assert len(handler.envelopes) == 1
    envelope = handler.envelopes[0]
    assert envelope.mail_from == "checks@harrowgate.example"
    assert sorted(envelope.rcpt_tos) == sorted(RECIPIENTS)
    delivered = _parse(envelope.original_content)
    sent = _parse(mail.as_bytes(plant_message))
    assert [p.get_content_type() for p in delivered.walk()] == [p.get_content_type() for p in sent.walk()]
    for a, b in zip(delivered.walk(), sent.walk(), strict=True):
        if not a.is_multipart():
            assert a.get_content() == b.get_content()


def test_login_over_a_plain_test_connection(smtp_server, plant_message):
    controller, handler = smtp_server
    mail.send(plant_message, host=controller.hostname, port=controller.port, security="none", username=USER,
              password=PASSWORD, timeout=10)
    assert len(handler.envelopes) == 1


def test_bad_credentials_give_one_clear_error(smtp_server, plant_message, capsys):
    controller, handler = smtp_server
    with pytest.raises(mail.MailError) as info:
        mail.send(plant_message, host=controller.hostname, port=controller.port, security="none", username=USER,
                  password="wrong-" + PASSWORD, timeout=10)
    message = str(info.value)
    assert message == f"the SMTP server 127.0.0.1:{controller.port} refused the login for user 'checks' (535)"
    assert info.value.__cause__ is None and info.value.__suppress_context__
    out = capsys.readouterr()
    assert PASSWORD not in message + out.out + out.err
    assert handler.envelopes == []


def test_refused_connection_gives_one_clear_error(plant_message):
    port = _free_port()  # nothing listens there
    with pytest.raises(mail.MailError, match=rf"^the SMTP server 127\.0\.0\.1:{port} refused the connection"):
        mail.send(plant_message, host="127.0.0.1", port=port, security="none", timeout=5)


def test_unknown_host_gives_one_clear_error(plant_message):
    with pytest.raises(mail.MailError, match="cannot be resolved"):
        mail.send(plant_message, host="no-such-host.invalid", port=25, security="none", timeout=5)


def test_starttls_not_offered_is_an_error(smtp_server, plant_message):
    controller, _ = smtp_server
    with pytest.raises(mail.MailError, match="does not offer STARTTLS"):
        mail.send(plant_message, host=controller.hostname, port=controller.port, security="starttls", timeout=10)


def test_tls_to_a_plain_server_is_an_error(smtp_server, plant_message):
    controller, _ = smtp_server
    with pytest.raises(mail.MailError, match=r"^(TLS with|cannot reach|the SMTP server) "):
        mail.send(plant_message, host=controller.hostname, port=controller.port, security="tls", timeout=10)


@pytest.mark.parametrize("kw,match", [({"security": "ssl"}, "security must be one of"),
                                      ({"port": 0}, "not a valid address"),
                                      ({"username": "u"}, "needs both a user name and a password")])
def test_bad_settings_are_refused_before_connecting(plant_message, kw, match):
    args = {"host": "127.0.0.1", "port": 25, "security": "none", **kw}
    with pytest.raises(mail.MailError, match=match):
        mail.send(plant_message, **args)


@pytest.fixture
def self_signed(tmp_path):
    import shutil
    import subprocess

    if shutil.which("openssl") is None:
        pytest.skip("openssl is not installed")
    key, cert = tmp_path / "key.pem", tmp_path / "cert.pem"
    subprocess.run(["openssl", "req", "-x509", "-newkey", "rsa:2048", "-nodes", "-keyout", str(key), "-out", str(cert),
                    "-days", "1", "-subj", "/CN=127.0.0.1"], check=True, capture_output=True)
    context = ssl.create_default_context(ssl.Purpose.CLIENT_AUTH)
    context.load_cert_chain(cert, key)
    return context


def test_untrusted_certificate_is_refused(self_signed, plant_message):
    from aiosmtpd.controller import Controller

    handler = _Handler()
    controller = Controller(handler, hostname="127.0.0.1", port=_free_port(), tls_context=self_signed)
    controller.start()
    try:
        with pytest.raises(mail.MailError, match=r"^TLS with 127\.0\.0\.1:\d+ failed: CERTIFICATE_VERIFY_FAILED"):
            mail.send(plant_message, host="127.0.0.1", port=controller.port, security="starttls", timeout=10)
    finally:
        controller.stop()
    assert handler.envelopes == []
