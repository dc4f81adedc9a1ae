"""The review around an audit: finding identities, waivers, baselines, annotated copies."""
