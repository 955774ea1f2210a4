"""The workspace database: models, sessions, bulk operations and queries.

This package is the only place in Stetline that speaks SQL.
"""
