"""The schematic canvas: symbols, scene items, the scene, the view and its controller."""
