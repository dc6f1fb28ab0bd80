"""One module per job: spec → run() → result (moving loads, crane runway, design envelope)."""
