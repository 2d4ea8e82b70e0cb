package tension

import (
	"fmt"
	"strconv"
	"strings"
)

var pointerEscaper = strings.NewReplacer("~", "~0", "/", "~1")

// ptr builds a JSON pointer from path segments, escaping ~ and / per RFC 6901.
func ptr(segs ...any) string {
	var b strings.Builder
	for _, s := range segs {
		b.WriteByte('/')
		switch v := s.(type) {
		case int:
			b.WriteString(strconv.Itoa(v))
		case string:
			if strings.ContainsAny(v, "~/") {
				v = pointerEscaper.Replace(v)
			}
			b.WriteString(v)
		default:
			fmt.Fprint(&b, v)
		}
	}
	return b.String()
}
