"""solve cache

A table for the front-end solves kept across processes (store/solves.py): the CLI and the web
share them, and a cold process reads a solve instead of integrating again. Nothing refers to
it and it holds no record, so the downgrade simply drops it.

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-02 19:20:00
"""

from alembic import op
import sqlalchemy as sa


revision = '0004'
down_revision = '0003'
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table(
        'solve_cache',
        sa.Column('key', sa.String(length=64), nullable=False),
        sa.Column('kind', sa.String(length=16), nullable=False),
        sa.Column('result', sa.Text(), nullable=False),
        sa.Column('created_at', sa.DateTime(), nullable=False),
        sa.PrimaryKeyConstraint('key', name=op.f('pk_solve_cache')))


def downgrade() -> None:
    op.drop_table('solve_cache')
