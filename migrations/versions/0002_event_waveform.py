"""event waveform

An event may record whether the applied stress was ac or dc; a current input's fuse is then
judged on the matching voltage rating (without it, on the lower of the two). Existing rows
keep NULL: not logged, and their hashes do not change (the field is hashed only when set).

Plain ALTER TABLE, not a batch copy: on SQLite a copy drops and recreates the event table,
which the holds' foreign keys to their events forbid as soon as one hold refers to an event.
Downgrading drops the logged waveforms: the events that had one then fail verify_chain, as
any edit of a hashed field does.

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-02 14:49:44.797741
"""

from alembic import op
import sqlalchemy as sa


revision = '0002'
down_revision = '0001'
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.add_column('event', sa.Column(
        'waveform', sa.String(length=8),
        sa.CheckConstraint("waveform IS NULL OR waveform IN ('ac', 'dc')",
                           name=op.f('ck_event_waveform_allowed')),
        nullable=True))


def downgrade() -> None:
    if op.get_bind().dialect.name != 'sqlite':
        op.drop_constraint(op.f('ck_event_waveform_allowed'), 'event', type_='check')
    op.drop_column('event', 'waveform')  # SQLite drops the column's own CHECK with it
