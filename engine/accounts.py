"""Accounts and roles: who may do what, checked on the server for the web app and the CLI alike.

A workspace with no accounts is a one-person workspace: any name may act. Once the first account
exists (it must be an admin), every action needs an existing, enabled account whose role allows
it. Passwords are hashed with werkzeug.security (see passwords.py). Signing in gives one answer
for every failure; the web app slows down repeated failures per account and client. Signing out,
a new password or role, and disabling or enabling an account raise the account's session
generation, which ends its existing sessions. Account changes are recorded as events.
"""

from __future__ import annotations

from sqlalchemy.orm import Session

from stetline import passwords
from stetline import settings as settings_mod
from stetline.errors import Forbidden, NotFound, StetlineError
from stetline.store import accounts as stored
from stetline.store import ops
from stetline.store.models import Account, Assignment

ROLES = ("editor", "expert", "reviewer", "admin")
EDITING = frozenset({"editor", "reviewer", "admin"})
EVERYONE = frozenset(ROLES)
REVIEWING = frozenset({"reviewer", "admin"})
ADMIN = frozenset({"admin"})

#: every action and the roles that may take it
PERMISSIONS: dict[str, frozenset[str]] = {
    "rewrite": EDITING, "pin": EDITING, "suppress": EDITING, "revert": EDITING,
    "annotate": EVERYONE, "comment": EVERYONE,
    "approve": REVIEWING, "accept": REVIEWING, "send-back": REVIEWING,
    "load": ADMIN, "redraft": ADMIN, "publish": ADMIN, "settings": ADMIN,
    "backup": ADMIN, "restore": ADMIN, "accounts": ADMIN, "assign": ADMIN,
    # reading, not acting: the recheck queue's "worth a data check" lines (datachecks.py), for the
    # people who fix or sign off statements
    "data-check": EDITING,
}
MAX_NAME = 100
#: the one answer to a failed sign-in, whatever failed (so it names no account)
REFUSED = "the name or the password is wrong, or the account is disabled"


def has_accounts(session: Session) -> bool:
    """True once the workspace has any account (it is then no longer a one-person workspace)."""
    return stored.has_accounts(session)


def get_account(session: Session, name: str) -> Account | None:
    """An account by name."""
    return stored.get_account(session, name)


def accounts(session: Session) -> list[Account]:
    """Every account, by name."""
    return stored.all_accounts(session)


def role_of(session: Session, name: str) -> str | None:
    """The role of an enabled account, or None (no such account, or disabled)."""
    account = get_account(session, name)
    return account.role if account is not None and account.enabled else None


def authorize(session: Session, by: str, action: str) -> None:
    """Refuse an action the acting account may not take; anyone may act without accounts."""
    allowed = PERMISSIONS[action]
    if not has_accounts(session):
        return
    account = get_account(session, by)
    if account is None:
        raise Forbidden(f"there is no account {by!r}; act as an existing account (--by NAME)")
    if not account.enabled:
        raise Forbidden(f"the account {by!r} is disabled")
    if account.role not in allowed:
        who = ", ".join(r for r in ROLES if r in allowed)
        raise Forbidden(f"{by} is {_a(account.role)} {account.role} and may not {action}; that needs: {who}")


def _a(word: str) -> str:
    return "an" if word[:1] in "aeiou" else "a"


def check_two_person_rule(session: Session, by: str, author: str | None) -> None:
    """Refuse a reviewer's approval of their own rewrite unless the workspace allows it."""
    if author is None or author != by or not has_accounts(session):
        return
    if settings_mod.with_defaults(ops.get_settings(session))["self_approval"]:
        return
    raise Forbidden(f"{by} wrote this text and may not also approve it (two-person rule; "
                    "the setting self_approval allows it)")


def _check_name(name: str) -> None:
    if not name or "/" in name or len(name) > MAX_NAME or not name.isprintable():
        raise StetlineError(f"an account name is 1 to {MAX_NAME} printable characters, without '/' "
                            "(no line breaks, tabs or control characters)")


def add_account(session: Session, name: str, role: str, password: str, *, by: str) -> Account:
    """Add an account; the first must be an admin, later ones are added by an admin."""
    name = name.strip()
    _check_name(name)
    if role not in ROLES:
        raise StetlineError(f"unknown role {role!r}; roles: {', '.join(ROLES)}")
    if has_accounts(session):
        authorize(session, by, "accounts")
    elif role != "admin":
        raise StetlineError("the first account must be an admin (--role admin)")
    if get_account(session, name) is not None:
        raise StetlineError(f"the account {name!r} exists already")
    passwords.check_new(name, password)
    account = Account(name=name, role=role, password_hash=passwords.hash_password(password))
    session.add(account)
    session.flush()
    ops.add_event(session, by, "account-add", detail={"account": name, "role": role})
    return account


def set_role(session: Session, name: str, role: str, *, by: str) -> Account:
    """Change an account's role (admins only); the last enabled admin keeps the role."""
    authorize(session, by, "accounts")
    if role not in ROLES:
        raise StetlineError(f"unknown role {role!r}; roles: {', '.join(ROLES)}")
    account = _existing(session, name)
    if account.role == "admin" and role != "admin" and stored.enabled_admins(session) == 1:
        raise StetlineError("this is the last admin; make another admin first")
    old, account.role = account.role, role
    account.session_generation += 1
    ops.add_event(session, by, "account-role", detail={"account": name, "old": old, "new": role})
    return account


def disable(session: Session, name: str, *, by: str, enable: bool = False) -> Account:
    """Disable (or enable again) an account (admins only); the last enabled admin stays."""
    authorize(session, by, "accounts")
    account = _existing(session, name)
    if not enable and account.role == "admin" and account.enabled and stored.enabled_admins(session) == 1:
        raise StetlineError("this is the last enabled admin; make another admin first")
    account.enabled = enable
    account.session_generation += 1
    if enable:
        account.failed_logins, account.locked_until = 0, None
    ops.add_event(session, by, "account-enable" if enable else "account-disable", detail={"account": name})
    return account


def set_password(session: Session, name: str, password: str, *, by: str) -> None:
    """Set an account's password (the account itself, or an admin)."""
    if by != name:
        authorize(session, by, "accounts")
    account = _existing(session, name)
    passwords.check_new(name, password)
    account.password_hash = passwords.hash_password(password)
    account.session_generation += 1
    ops.add_event(session, by, "account-password", detail={"account": name})


def _existing(session: Session, name: str) -> Account:
    account = get_account(session, name)
    if account is None:
        raise NotFound(f"there is no account {name!r}")
    return account


def login(session: Session, name: str, password: str) -> Account:
    """Check a sign-in; every failure gives the same answer after the same work (REFUSED).

    A wrong password is counted on the account (failed_logins) for the admin to see; slowing
    down repeated failures is the web app's part, per account and client.
    """
    account = get_account(session, name)
    right = passwords.matches(account.password_hash if account is not None else None, password)
    if account is None or not right or not account.enabled:
        if account is not None and not right:
            account.failed_logins += 1
        raise StetlineError(REFUSED)
    account.failed_logins, account.locked_until = 0, None
    return account


def end_sessions(session: Session, name: str) -> None:
    """End every session of an account (signing out): cookies made before are refused."""
    account = get_account(session, name)
    if account is not None:
        account.session_generation += 1


def session_role(session: Session, name: str, generation: object) -> str | None:
    """The role of an enabled account whose session generation is still ``generation``, or None."""
    account = get_account(session, name)
    if account is None or not account.enabled or account.session_generation != generation:
        return None
    return account.role


def assign(session: Session, name: str, *, entity: str | None = None, topic: str | None = None, by: str) -> Assignment:
    """Assign an entity or a topic to a person (admins only)."""
    authorize(session, by, "assign")
    _existing(session, name)
    if (entity is None) == (topic is None):
        raise StetlineError("assign either an entity or a topic")
    row = Assignment(account=name, entity=entity, topic=topic, by=by)
    session.add(row)
    ops.add_event(session, by, "assign", detail={"account": name, "entity": entity, "topic": topic})
    return row


def assignments(session: Session, name: str) -> list[Assignment]:
    """What is assigned to a person."""
    return stored.assignments_of(session, name)
