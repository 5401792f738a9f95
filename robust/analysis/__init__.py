"""What we conclude: verdicts, margins, ranking, yield."""
