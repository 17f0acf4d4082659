"""The workspace: its folder (:mod:`.folder`), typed settings (:mod:`.settings`), the store (all SQL)."""
