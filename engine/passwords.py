"""Password rules and checks: length limits, the weakest passwords refused, and a check that
takes as long for an unknown name as for a known one.

Hashes come from werkzeug.security. A sign-in for a name with no account still checks the typed
password against a hash made once per process, so the answer does not come sooner and tell an
outsider which names exist.
"""

from __future__ import annotations

from functools import lru_cache

from werkzeug.security import check_password_hash, generate_password_hash

from stetline.errors import StetlineError

MIN_PASSWORD = 8
#: the longest password accepted anywhere (setting one, and signing in on the web or the CLI)
MAX_PASSWORD = 200

#: Passwords of eight or more characters found at the top of every published list of the most
#: common passwords (from memory of the UK NCSC's 2019 list of the 100,000 passwords most often
#: seen in breaches); the list is short on purpose: it refuses the first guesses of an attacker.
COMMON_PASSWORDS = frozenset({
    "password", "password1", "password12", "password123", "password!", "passw0rd", "p@ssw0rd", "p@ssword",
    "12345678", "123456789", "1234567890", "0123456789", "123123123", "12341234", "11223344", "12344321",
    "11111111", "00000000", "88888888", "99999999", "87654321", "1qaz2wsx", "zaq12wsx", "1q2w3e4r",
    "1q2w3e4r5t", "qwertyui", "qwertyuiop", "qwerty12", "qwerty123", "qwerty1234", "asdfghjk", "asdfghjkl",
    "zxcvbnm1", "abcd1234", "abc12345", "abc123456", "abcdefgh", "iloveyou", "iloveyou1", "sunshine",
    "princess", "football", "baseball", "basketball", "welcome1", "welcome123", "trustno1", "superman",
    "starwars", "letmein1", "letmein123", "computer", "whatever", "michelle", "jennifer", "corvette",
    "mercedes", "liverpool", "chelsea1", "arsenal1", "charlie1", "danielle", "midnight", "jordan23",
    "internet", "changeme", "changeit", "admin123", "administrator", "secret123", "default1", "master12",
    "football1", "monkey123", "dragon12", "shadow12", "freedom1", "loveyou1", "q1w2e3r4", "q1w2e3r4t5",
    "stetline", "stetline1", "stetline123",
})


def check_new(name: str, password: str) -> None:
    """Refuse a password that is too short, too long, the account's name or a very common one."""
    if len(password) < MIN_PASSWORD:
        raise StetlineError(f"a password needs at least {MIN_PASSWORD} characters")
    if len(password) > MAX_PASSWORD:
        raise StetlineError(f"a password has at most {MAX_PASSWORD} characters")
    low = password.lower()
    if low in COMMON_PASSWORDS or len(set(low)) == 1 or name.lower() in (low, low[::-1]):
        raise StetlineError("that password is among the first an attacker tries (a very common one, "
                            "one repeated character or the account's name); choose another")


def hash_password(password: str) -> str:
    """The stored hash of a password."""
    return generate_password_hash(password)


@lru_cache(maxsize=1)
def _dummy_hash() -> str:
    return generate_password_hash("no account has this password")


def matches(stored_hash: str | None, password: str) -> bool:
    """Whether a password matches a stored hash; with no hash (no such account) the same work
    is done against a dummy hash and the answer is False."""
    if len(password) > MAX_PASSWORD:
        password = ""  # never matches, but is still checked, so the answer takes the usual time
        check_password_hash(stored_hash or _dummy_hash(), password)
        return False
    if stored_hash is None:
        check_password_hash(_dummy_hash(), password)
        return False
    return check_password_hash(stored_hash, password)
