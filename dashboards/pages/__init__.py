"""The pages: briefing and comparison, the HTML shell and style, embeds, escaping."""
