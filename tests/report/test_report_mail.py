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
    return mail.build_message(sample.plant(), sender=SENDER, recipients=RECIPIENTS)


def test_structure_alternatives_related_images_attachment(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    assert msg.get_content_type() == "multipart/mixed"
    alternative, attachment = list(msg.iter_parts())
    assert alternative.get_content_type() == "multipart/alternative"
    plain, related = list(alternative.iter_parts())
    assert plain.get_content_type() == "text/plain"
    assert related.get_content_type() == "multipart/related"
    html_part, *images = list(related.iter_parts())
    assert html_part.get_content_type() == "text/html"
    # one PNG per chart in the result: conveyor 2, servo 2, hoist 1
    assert len(images) == 5 and all(i.get_content_type() == "image/png" for i in images)
    assert all(i.get_content().startswith(b"\x89PNG\r\n\x1a\n") for i in images)
    assert attachment.get_content_type() == "text/html"
    assert attachment.get_content_disposition() == "attachment"
    assert attachment.get_filename() == "rulecheck-report.html"


def test_every_cid_reference_resolves(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    related = next(p for p in msg.walk() if p.get_content_type() == "multipart/related")
    html_part, *images = list(related.iter_parts())
    body = html_part.get_content()
    cids = re.findall(r'src="cid:([^"]+)"', body)
    content_ids = {i["Content-ID"].strip("<>") for i in images}
    assert cids and set(cids) == content_ids and len(cids) == len(content_ids)
    assert "<svg" not in body  # mail readers drop inline SVG; the images stand in


def test_attachment_is_the_full_self_contained_report(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    attachment = list(msg.iter_parts())[1]
    # text parts travel with CRLF line ends (RFC 5322); the report itself is unchanged
    assert attachment.get_content().replace("\r\n", "\n") == html.render(sample.plant())


def test_text_part_has_findings_chart_text_and_cautions(plant_message):
    msg = _parse(mail.as_bytes(plant_message))
    text = next(p for p in msg.walk() if p.get_content_type() == "text/plain").get_content()
    for words in ("[X] ERROR [SAFETY] holding-brake-vertical", "static torque: 412 N·m", "FIX: add a spring-applied",
                  "Not checked", "environment.altitude", "R. Okafor", "DC-bus trip level 800 V",
                  "CAUTIONS", "NEC Article 430", "Nobody works under a suspended load", "Permanent-magnet motors"):
        assert words in text, words


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
    assert "multipart/related" in text and "file rulecheck-report.html; attachment" in text
    assert len(re.findall(r"image/png, [\d,]+ bytes \(file dt\d-\w+\.[0-9a-f]+\.png; Content-ID <", text)) == 5
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
