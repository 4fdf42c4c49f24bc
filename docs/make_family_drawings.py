"""Regenerate docs/families/*.png (the README's drawings of each family): python docs/make_family_drawings.py"""

from pathlib import Path

from surrogate.report._family_sheet import draw_family_gallery

if __name__ == "__main__":
    for path in draw_family_gallery(Path(__file__).resolve().parent / "families"):
        print(path)
