"""Initial schema: people, tests, analysis versions, audit trail, sign-offs, accounts, share links.

Revision ID: 0001
Revises: (none)
Create Date: 2026-12-02 06:16:02.412500
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0001'
down_revision = None
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table('login_attempts',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('username', sa.String(length=120), nullable=False),
    sa.Column('at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('outcome', sa.String(length=16), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_login_attempts'))
    )
    with op.batch_alter_table('login_attempts', schema=None) as batch_op:
        batch_op.create_index('ix_login_attempts_username_at', ['username', 'at'], unique=False)

    op.create_table('store_info',
    sa.Column('key', sa.String(length=64), nullable=False),
    sa.Column('value', sa.Text(), nullable=False),
    sa.PrimaryKeyConstraint('key', name=op.f('pk_store_info'))
    )
    op.create_table('users',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('username', sa.String(length=120), nullable=False),
    sa.Column('role', sa.String(length=16), nullable=False),
    sa.Column('password_hash', sa.String(length=255), nullable=True),
    sa.Column('auth_source', sa.String(length=16), nullable=False),
    sa.Column('is_active', sa.Boolean(), nullable=False),
    sa.Column('is_demo', sa.Boolean(), nullable=False),
    sa.Column('created_at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('disabled_at', sa.DateTime(timezone=True), nullable=True),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_users')),
    sa.UniqueConstraint('username', name=op.f('uq_users_username'))
    )
    op.create_table('people',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('code', sa.String(length=120), nullable=False),
    sa.Column('display_name', sa.String(length=200), nullable=True),
    sa.Column('sex', sa.String(length=16), nullable=True),
    sa.Column('birth_year', sa.Integer(), nullable=True),
    sa.Column('created_at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('created_by', sa.Integer(), nullable=True),
    sa.Column('deleted_at', sa.DateTime(timezone=True), nullable=True),
    sa.Column('deleted_by', sa.Integer(), nullable=True),
    sa.ForeignKeyConstraint(['created_by'], ['users.id'], name=op.f('fk_people_created_by_users')),
    sa.ForeignKeyConstraint(['deleted_by'], ['users.id'], name=op.f('fk_people_deleted_by_users')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_people')),
    sa.UniqueConstraint('code', name=op.f('uq_people_code'))
    )
    op.create_table('tests',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('person_id', sa.Integer(), nullable=False),
    sa.Column('test_date', sa.String(length=32), nullable=True),
    sa.Column('protocol', sa.String(length=200), nullable=True),
    sa.Column('original_file_name', sa.String(length=255), nullable=False),
    sa.Column('raw_sha256', sa.String(length=64), nullable=False),
    sa.Column('raw_size_bytes', sa.Integer(), nullable=False),
    sa.Column('raw_bytes', sa.LargeBinary(), nullable=False),
    sa.Column('session_text', sa.Text(), nullable=False),
    sa.Column('mapping_json', sa.Text(), nullable=True),
    sa.Column('flags_json', sa.Text(), nullable=False),
    sa.Column('current_version', sa.Integer(), nullable=False),
    sa.Column('imported_at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('imported_by', sa.Integer(), nullable=True),
    sa.Column('deleted_at', sa.DateTime(timezone=True), nullable=True),
    sa.Column('deleted_by', sa.Integer(), nullable=True),
    sa.ForeignKeyConstraint(['deleted_by'], ['users.id'], name=op.f('fk_tests_deleted_by_users')),
    sa.ForeignKeyConstraint(['imported_by'], ['users.id'], name=op.f('fk_tests_imported_by_users')),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_tests_person_id_people')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_tests'))
    )
    with op.batch_alter_table('tests', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_tests_person_id'), ['person_id'], unique=False)
        batch_op.create_index('ix_tests_raw_sha256_live', ['raw_sha256'], unique=True, sqlite_where=sa.text('deleted_at IS NULL'), postgresql_where=sa.text('deleted_at IS NULL'))

    op.create_table('analysis_versions',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('test_id', sa.Integer(), nullable=False),
    sa.Column('version', sa.Integer(), nullable=False),
    sa.Column('settings_json', sa.Text(), nullable=False),
    sa.Column('results_json', sa.Text(), nullable=True),
    sa.Column('results_error', sa.Text(), nullable=True),
    sa.Column('vo2peak_ml_min', sa.Double(), nullable=True),
    sa.Column('vt1_vo2_ml_min', sa.Double(), nullable=True),
    sa.Column('ve_vco2_slope', sa.Double(), nullable=True),
    sa.Column('created_at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('created_by', sa.Integer(), nullable=True),
    sa.Column('reason', sa.Text(), nullable=False),
    sa.ForeignKeyConstraint(['created_by'], ['users.id'], name=op.f('fk_analysis_versions_created_by_users')),
    sa.ForeignKeyConstraint(['test_id'], ['tests.id'], name=op.f('fk_analysis_versions_test_id_tests')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_analysis_versions')),
    sa.UniqueConstraint('test_id', 'version', name=op.f('uq_analysis_versions_test_id_version'))
    )
    with op.batch_alter_table('analysis_versions', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_analysis_versions_test_id'), ['test_id'], unique=False)

    op.create_table('audit_events',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('actor_id', sa.Integer(), nullable=True),
    sa.Column('actor_name', sa.String(length=120), nullable=False),
    sa.Column('action', sa.String(length=40), nullable=False),
    sa.Column('test_id', sa.Integer(), nullable=True),
    sa.Column('person_id', sa.Integer(), nullable=True),
    sa.Column('field', sa.String(length=200), nullable=True),
    sa.Column('old_value', sa.Text(), nullable=True),
    sa.Column('new_value', sa.Text(), nullable=True),
    sa.Column('reason', sa.Text(), nullable=False),
    sa.ForeignKeyConstraint(['actor_id'], ['users.id'], name=op.f('fk_audit_events_actor_id_users')),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_audit_events_person_id_people')),
    sa.ForeignKeyConstraint(['test_id'], ['tests.id'], name=op.f('fk_audit_events_test_id_tests')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_audit_events'))
    )
    with op.batch_alter_table('audit_events', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_audit_events_test_id'), ['test_id'], unique=False)

    op.create_table('share_links',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('token_sha256', sa.String(length=64), nullable=False),
    sa.Column('person_id', sa.Integer(), nullable=True),
    sa.Column('test_id', sa.Integer(), nullable=True),
    sa.Column('show_name', sa.Boolean(), nullable=False),
    sa.Column('sections_json', sa.Text(), nullable=False),
    sa.Column('note', sa.Text(), nullable=False),
    sa.Column('created_at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('created_by', sa.Integer(), nullable=False),
    sa.Column('expires_at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('revoked_at', sa.DateTime(timezone=True), nullable=True),
    sa.Column('revoked_by', sa.Integer(), nullable=True),
    sa.ForeignKeyConstraint(['created_by'], ['users.id'], name=op.f('fk_share_links_created_by_users')),
    sa.ForeignKeyConstraint(['person_id'], ['people.id'], name=op.f('fk_share_links_person_id_people')),
    sa.ForeignKeyConstraint(['revoked_by'], ['users.id'], name=op.f('fk_share_links_revoked_by_users')),
    sa.ForeignKeyConstraint(['test_id'], ['tests.id'], name=op.f('fk_share_links_test_id_tests')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_share_links')),
    sa.UniqueConstraint('token_sha256', name=op.f('uq_share_links_token_sha256'))
    )
    op.create_table('sign_offs',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('test_id', sa.Integer(), nullable=False),
    sa.Column('version', sa.Integer(), nullable=False),
    sa.Column('signed_by', sa.Integer(), nullable=False),
    sa.Column('signed_at', sa.DateTime(timezone=True), nullable=False),
    sa.Column('note', sa.Text(), nullable=False),
    sa.ForeignKeyConstraint(['signed_by'], ['users.id'], name=op.f('fk_sign_offs_signed_by_users')),
    sa.ForeignKeyConstraint(['test_id'], ['tests.id'], name=op.f('fk_sign_offs_test_id_tests')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_sign_offs')),
    sa.UniqueConstraint('test_id', 'version', name=op.f('uq_sign_offs_test_id_version'))
    )
    with op.batch_alter_table('sign_offs', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_sign_offs_test_id'), ['test_id'], unique=False)

    op.create_table('share_link_tests',
    sa.Column('share_id', sa.Integer(), nullable=False),
    sa.Column('test_id', sa.Integer(), nullable=False),
    sa.ForeignKeyConstraint(['share_id'], ['share_links.id'], name=op.f('fk_share_link_tests_share_id_share_links')),
    sa.ForeignKeyConstraint(['test_id'], ['tests.id'], name=op.f('fk_share_link_tests_test_id_tests')),
    sa.PrimaryKeyConstraint('share_id', 'test_id', name=op.f('pk_share_link_tests'))
    )
    op.create_table('share_views',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('share_id', sa.Integer(), nullable=False),
    sa.Column('viewed_at', sa.DateTime(timezone=True), nullable=False),
    sa.ForeignKeyConstraint(['share_id'], ['share_links.id'], name=op.f('fk_share_views_share_id_share_links')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_share_views'))
    )
    with op.batch_alter_table('share_views', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_share_views_share_id'), ['share_id'], unique=False)



def downgrade() -> None:
    with op.batch_alter_table('share_views', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_share_views_share_id'))

    op.drop_table('share_views')
    op.drop_table('share_link_tests')
    with op.batch_alter_table('sign_offs', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_sign_offs_test_id'))

    op.drop_table('sign_offs')
    op.drop_table('share_links')
    with op.batch_alter_table('audit_events', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_audit_events_test_id'))

    op.drop_table('audit_events')
    with op.batch_alter_table('analysis_versions', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_analysis_versions_test_id'))

    op.drop_table('analysis_versions')
    with op.batch_alter_table('tests', schema=None) as batch_op:
        batch_op.drop_index('ix_tests_raw_sha256_live', sqlite_where=sa.text('deleted_at IS NULL'), postgresql_where=sa.text('deleted_at IS NULL'))
        batch_op.drop_index(batch_op.f('ix_tests_person_id'))

    op.drop_table('tests')
    op.drop_table('people')
    op.drop_table('users')
    op.drop_table('store_info')
    with op.batch_alter_table('login_attempts', schema=None) as batch_op:
        batch_op.drop_index('ix_login_attempts_username_at')

    op.drop_table('login_attempts')
