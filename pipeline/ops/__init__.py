"""Operations: rebuilds, status, schedules, the store lock."""
