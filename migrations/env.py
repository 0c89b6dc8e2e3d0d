"""Alembic environment: migrations run on the engine the caller hands over.

`withstand init` (registry.store.db.upgrade) puts the engine in ``config.attributes``; batch
mode lets the same migrations alter tables on SQLite, which cannot ALTER most constraints.
"""

from alembic import context

from registry.store.models import Base

config = context.config
target_metadata = Base.metadata


def run_migrations_online() -> None:
    engine = config.attributes.get("engine")
    if engine is None:
        from registry.store.db import make_engine
        engine = make_engine(config.get_main_option("sqlalchemy.url"))
    with engine.connect() as connection:
        context.configure(connection=connection, target_metadata=target_metadata,
                          render_as_batch=True, compare_type=True)
        with context.begin_transaction():
            context.run_migrations()
        connection.commit()


if context.is_offline_mode():
    raise SystemExit("withstand's migrations run online only: use `withstand init`")
run_migrations_online()
