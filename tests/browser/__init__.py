"""Browser tests: Python Playwright driving Debian's Chromium against the web app."""
