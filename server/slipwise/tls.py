"""A self-signed certificate for this machine's LAN addresses, so tablets can use HTTPS.

Browsers give the offline page (service worker) only to HTTPS origins and
localhost. The certificate names every address the machine answers on; the
tablet must be told to trust it once (the README says how).
"""

from __future__ import annotations

import hashlib
import ipaddress
import os
import socket
from datetime import datetime, timedelta, timezone
from pathlib import Path


def local_addresses() -> list[str]:
    """IPv4/IPv6 addresses of this machine (loopback included), found without sending anything."""
    found: set[str] = {"127.0.0.1"}
    try:
        for info in socket.getaddrinfo(socket.gethostname(), None):
            found.add(info[4][0].split("%")[0])
    except OSError:
        pass
    for family, probe in ((socket.AF_INET, "192.0.2.1"), (socket.AF_INET6, "2001:db8::1")):
        try:
            with socket.socket(family, socket.SOCK_DGRAM) as s:
                s.connect((probe, 9))  # UDP connect picks the outgoing interface; no packet is sent
                found.add(s.getsockname()[0].split("%")[0])
        except OSError:
            pass
    return sorted(a for a in found if _is_ip(a))


def _is_ip(text: str) -> bool:
    try:
        ipaddress.ip_address(text)
        return True
    except ValueError:
        return False


def fingerprint_sha256(cert_pem: bytes) -> str:
    from cryptography import x509
    der = x509.load_pem_x509_certificate(cert_pem).public_bytes(_der())
    digest = hashlib.sha256(der).hexdigest().upper()
    return ":".join(digest[i:i + 2] for i in range(0, len(digest), 2))


def _der():
    from cryptography.hazmat.primitives.serialization import Encoding
    return Encoding.DER


def _covers(cert_path: Path, addresses: list[str]) -> bool:
    from cryptography import x509
    try:
        cert = x509.load_pem_x509_certificate(cert_path.read_bytes())
        names = cert.extensions.get_extension_for_class(x509.SubjectAlternativeName).value
    except (OSError, ValueError, x509.ExtensionNotFound):
        return False
    have = {str(ip) for ip in names.get_values_for_type(x509.IPAddress)}
    valid = cert.not_valid_after_utc > datetime.now(timezone.utc) + timedelta(days=7)
    return valid and set(addresses) <= have


def self_signed(folder: Path, addresses: list[str] | None = None) -> tuple[Path, Path, bool]:
    """(cert path, key path, made now): reuse the certificate in ``folder`` while it covers the addresses."""
    from cryptography import x509
    from cryptography.hazmat.primitives import hashes, serialization
    from cryptography.hazmat.primitives.asymmetric import ec
    from cryptography.x509.oid import ExtendedKeyUsageOID, NameOID

    addresses = addresses or local_addresses()
    folder.mkdir(parents=True, exist_ok=True)
    cert_path, key_path = folder / "slipwise-cert.pem", folder / "slipwise-key.pem"
    if cert_path.exists() and key_path.exists() and _covers(cert_path, addresses):
        return cert_path, key_path, False
    key = ec.generate_private_key(ec.SECP256R1())
    host = socket.gethostname() or "slipwise"
    name = x509.Name([x509.NameAttribute(NameOID.COMMON_NAME, f"slipwise on {host}"[:64])])
    now = datetime.now(timezone.utc)
    alt = [x509.DNSName("localhost")] + [x509.IPAddress(ipaddress.ip_address(a)) for a in addresses]
    if host and all(c.isalnum() or c in "-." for c in host):
        alt.append(x509.DNSName(host))
    cert = (x509.CertificateBuilder().subject_name(name).issuer_name(name).public_key(key.public_key())
            .serial_number(x509.random_serial_number())
            .not_valid_before(now - timedelta(minutes=5)).not_valid_after(now + timedelta(days=825))
            .add_extension(x509.SubjectAlternativeName(alt), critical=False)
            .add_extension(x509.BasicConstraints(ca=True, path_length=0), critical=True)
            .add_extension(x509.ExtendedKeyUsage([ExtendedKeyUsageOID.SERVER_AUTH]), critical=False)
            .sign(key, hashes.SHA256()))
    fd = os.open(key_path, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
    with os.fdopen(fd, "wb") as f:
        f.write(key.private_bytes(serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8,
                                  serialization.NoEncryption()))
    cert_path.write_bytes(cert.public_bytes(serialization.Encoding.PEM))
    return cert_path, key_path, True
