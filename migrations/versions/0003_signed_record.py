"""signed record: keyed links for events, hold and change chains, the seal of older entries

New events are linked with HMAC-SHA256 under a key kept outside the database (RFC 2104), their
content naming unit and user by id and by tag and login. Holds (opening and release) and
change records get chains of their own in ``record_link``.

A database that already holds events, holds or changes gets one ``chain_seal`` row recording
the boundary: events up to the last one here keep their plain SHA-256 links (so heads in
workbooks exported before still compare), with their count and head; holds and changes up to
the last id here had no link. ``withstand init`` then seals it: checks the old links, links
those holds and changes under the key and signs the row. Until then `audit verify` fails.

Downgrading drops both tables: events linked under the key then fail the plain verification
of the older code, as any edit would.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-02 16:00:00
"""

from alembic import op
import sqlalchemy as sa


revision = '0003'
down_revision = '0002'
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table(
        'record_link',
        sa.Column('id', sa.Integer(), nullable=False),
        sa.Column('chain', sa.String(length=16), nullable=False),
        sa.Column('kind', sa.String(length=16), nullable=False),
        sa.Column('subject_id', sa.Integer(), nullable=False),
        sa.Column('prev_hash', sa.String(length=64), nullable=False),
        sa.Column('hash', sa.String(length=64), nullable=False),
        sa.CheckConstraint("chain IN ('hold', 'change')",
                           name=op.f('ck_record_link_chain_allowed')),
        sa.CheckConstraint("kind IN ('hold-opened', 'hold-released', 'change')",
                           name=op.f('ck_record_link_kind_allowed')),
        sa.PrimaryKeyConstraint('id', name=op.f('pk_record_link')),
        sa.UniqueConstraint('hash', name=op.f('uq_record_link_hash')))
    seal = op.create_table(
        'chain_seal',
        sa.Column('id', sa.Integer(), nullable=False),
        sa.Column('legacy_last_event_id', sa.Integer(), nullable=False),
        sa.Column('legacy_events', sa.Integer(), nullable=False),
        sa.Column('legacy_head', sa.String(length=64), nullable=False),
        sa.Column('legacy_last_hold_id', sa.Integer(), nullable=False),
        sa.Column('legacy_last_change_id', sa.Integer(), nullable=False),
        sa.Column('sealed_at', sa.DateTime(), nullable=True),
        sa.Column('mac', sa.String(length=64), nullable=True),
        sa.PrimaryKeyConstraint('id', name=op.f('pk_chain_seal')))
    bind = op.get_bind()
    last_event, events = bind.execute(sa.text("SELECT MAX(id), COUNT(*) FROM event")).one()
    last_hold = bind.execute(sa.text("SELECT MAX(id) FROM hold")).scalar()
    last_change = bind.execute(sa.text("SELECT MAX(id) FROM change")).scalar()
    if last_event or last_hold or last_change:
        head = bind.execute(sa.text("SELECT hash FROM event ORDER BY id DESC LIMIT 1")).scalar()
        op.bulk_insert(seal, [{
            'id': 1, 'legacy_last_event_id': last_event or 0, 'legacy_events': events or 0,
            'legacy_head': head or '0' * 64, 'legacy_last_hold_id': last_hold or 0,
            'legacy_last_change_id': last_change or 0, 'sealed_at': None, 'mac': None}])


def downgrade() -> None:
    op.drop_table('chain_seal')
    op.drop_table('record_link')
