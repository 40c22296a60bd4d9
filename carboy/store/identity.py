"""Who writes a record, and from where.

* **Who** is the account of the process's real user id, looked up in the password
  database (``pwd.getpwuid(os.getuid())``).  Environment variables (``LOGNAME``,
  ``USER``, ``LNAME``, ``USERNAME``) are never read: anyone can set them, and
  ``getpass.getuser()`` trusts them.  An id with no account is recorded as ``uid:N``.
* **Where from** is informational, not proof.  On an SSH login, sshd puts the client's
  address in ``SSH_CONNECTION`` (and ``SSH_CLIENT``); those are environment variables, so
  the user can change them.  carboy records the address only if it reads as an IP
  address, and labels it with where it came from: ``192.0.2.40 (as reported by
  SSH_CONNECTION)``.  Without them the origin is ``local`` (which a user can also claim
  by unsetting them).  See docs/shared-server.md.
"""

from __future__ import annotations

import ipaddress
import os
import pwd
from collections.abc import Mapping

SSH_VARIABLES = ("SSH_CLIENT", "SSH_CONNECTION")
"""Where sshd reports the client's address, first found wins (both start with it)."""
LOCAL = "local"


def current_user() -> str:
    """The login name of the process's real user id (never from the environment)."""
    uid = os.getuid()
    try:
        return pwd.getpwuid(uid).pw_name
    except (KeyError, OSError):
        return f"uid:{uid}"


def current_origin(environ: Mapping[str, str] | None = None) -> str:
    """Where the user is, labelled with its source (see the module notes)."""
    env = os.environ if environ is None else environ
    for var in SSH_VARIABLES:
        value = env.get(var, "")
        if not value.strip():
            continue
        first = value.split()[0][:64]
        try:
            address = str(ipaddress.ip_address(first))
        except ValueError:
            return f"unreadable address (as reported by {var})"
        return f"{address} (as reported by {var})"
    return LOCAL
