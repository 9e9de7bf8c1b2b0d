"""Reading IFC models: members, sections, materials and lengths."""
