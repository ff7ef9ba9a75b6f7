package report

import "image/color"

// Palette returns the group colour cycle of the scatter plots, in the order
// groups receive them (groups are sorted by name, so a group keeps its
// colour across runs of the same labels file).
//
// The eight colours are our own. They were chosen by a search over the
// sRGB cube in steps of 15 for the set whose smallest pairwise CIELAB
// distance (CIE76 Delta E) is largest in four views at once: normal
// vision and the full-severity deuteranopia, protanopia and tritanopia
// simulations of Machado, Oliveira & Fernandes 2009 (IEEE TVCG 15:1291),
// counting the Unlabelled grey as a ninth member, with lightness L* in
// [28, 72] (visible on white, lighter than black text) and chroma above 30
// (no colour reads as grey). The result was then ordered greedily so that
// every prefix stays as far apart as possible: a report with three groups
// uses the three most distinct colours. The smallest pairwise distance of
// the set in any of the four views is about 26 (palette_test.go checks at
// least 25), well above the 10 or so at which small marks are told apart
// at a glance (common practice, no source).
//
//	#FF960F orange        #4B0FE1 violet-blue   #B41E0F brick red
//	#870F4B wine          #D287E1 lilac         #4B78FF cornflower
//	#5AC369 green         #784B96 dusky purple
//
// With more than eight groups the cycle repeats with hollow rings instead
// of filled discs.
func Palette() [8]color.NRGBA { return palette }

var palette = [8]color.NRGBA{
	{0xFF, 0x96, 0x0F, 0xFF},
	{0x4B, 0x0F, 0xE1, 0xFF},
	{0xB4, 0x1E, 0x0F, 0xFF},
	{0x87, 0x0F, 0x4B, 0xFF},
	{0xD2, 0x87, 0xE1, 0xFF},
	{0x4B, 0x78, 0xFF, 0xFF},
	{0x5A, 0xC3, 0x69, 0xFF},
	{0x78, 0x4B, 0x96, 0xFF},
}

// Unlabelled returns the colour of samples without a group in the labels
// file.
func Unlabelled() color.NRGBA { return color.NRGBA{0x96, 0x96, 0x96, 0xFF} }

// UnlabelledName is the legend entry of samples without a group.
const UnlabelledName = "(no label)"
