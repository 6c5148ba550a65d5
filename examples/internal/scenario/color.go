package scenario

import "image/color"

// palette holds the line colours of the convergence plot (our own choice:
// dark blue, orange, grey, purple).
var palette = []color.RGBA{
	{R: 0x1f, G: 0x3b, B: 0x73, A: 0xff},
	{R: 0xd9, G: 0x6c, B: 0x06, A: 0xff},
	{R: 0x60, G: 0x60, B: 0x60, A: 0xff},
	{R: 0x7a, G: 0x3e, B: 0x9d, A: 0xff},
}

func plotColor(i int) color.Color { return palette[i%len(palette)] }
