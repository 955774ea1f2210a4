"""Queries on accounts and assignments; the rules about them live in stetline.accounts."""

from __future__ import annotations

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from stetline.store.models import Account, Assignment


def has_accounts(session: Session) -> bool:
    """True once the workspace has any account."""
    return bool(session.scalar(select(func.count()).select_from(Account)))


def get_account(session: Session, name: str) -> Account | None:
    """An account by name."""
    return session.scalars(select(Account).where(Account.name == name)).first()


def all_accounts(session: Session) -> list[Account]:
    """Every account, by name."""
    return list(session.scalars(select(Account).order_by(Account.name)))


def enabled_admins(session: Session) -> int:
    """How many enabled accounts have the admin role."""
    return int(session.scalar(
        select(func.count()).select_from(Account).where(Account.role == "admin", Account.enabled.is_(True))
    ) or 0)


def assignments_of(session: Session, name: str) -> list[Assignment]:
    """What is assigned to a person, oldest first."""
    return list(session.scalars(select(Assignment).where(Assignment.account == name).order_by(Assignment.id)))
