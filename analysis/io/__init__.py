"""Explicit readers and writers: Tidemark session files and generic cart exports."""
