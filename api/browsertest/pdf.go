package browsertest

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
)

const howToPoppler = `the PDF checks need pdfinfo and pdftotext from poppler-utils
(Debian: apt-get install -y poppler-utils); bash .ci/run installs them when missing`

// PDFInfo is what pdfinfo reports about a PDF.
type PDFInfo struct {
	Pages int
	// WidthPt and HeightPt are the first page's size in PostScript points
	// (1/72 in).
	WidthPt, HeightPt float64
}

var (
	pagesRE = regexp.MustCompile(`(?m)^Pages:\s+(\d+)\s*$`)
	sizeRE  = regexp.MustCompile(`(?m)^Page size:\s+([0-9.]+) x ([0-9.]+) pts`)
)

// ReadPDFInfo runs pdfinfo on pdf.
func ReadPDFInfo(pdf []byte) (PDFInfo, error) {
	out, err := poppler("pdfinfo", pdf)
	if err != nil {
		return PDFInfo{}, err
	}
	m := pagesRE.FindSubmatch(out)
	s := sizeRE.FindSubmatch(out)
	if m == nil || s == nil {
		return PDFInfo{}, fmt.Errorf("pdfinfo gave no page count or size:\n%s", out)
	}
	var info PDFInfo
	info.Pages, _ = strconv.Atoi(string(m[1]))
	info.WidthPt, _ = strconv.ParseFloat(string(s[1]), 64)
	info.HeightPt, _ = strconv.ParseFloat(string(s[2]), 64)
	return info, nil
}

// PDFText returns the PDF's text as pdftotext lays it out (-layout), pages
// separated by form feeds.
func PDFText(pdf []byte) (string, error) {
	out, err := poppler("pdftotext", pdf, "-layout", "-enc", "UTF-8")
	return string(out), err
}

// poppler runs a poppler tool on pdf written to a temporary file; for
// pdftotext the text goes to standard output ("-").
func poppler(tool string, pdf []byte, args ...string) ([]byte, error) {
	bin, err := exec.LookPath(tool)
	if err != nil {
		return nil, errors.New(howToPoppler)
	}
	if !bytes.HasPrefix(pdf, []byte("%PDF-")) {
		return nil, fmt.Errorf("not a PDF (starts %q)", pdf[:min(len(pdf), 16)])
	}
	dir, err := os.MkdirTemp("", "browsertest-pdf")
	if err != nil {
		return nil, err
	}
	defer os.RemoveAll(dir)
	f := filepath.Join(dir, "in.pdf")
	if err := os.WriteFile(f, pdf, 0o600); err != nil {
		return nil, err
	}
	argv := append(append([]string{}, args...), f)
	if tool == "pdftotext" {
		argv = append(argv, "-")
	}
	var stdout, stderr bytes.Buffer
	cmd := exec.Command(bin, argv...)
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		return nil, fmt.Errorf("%s: %v: %s", tool, err, stderr.String())
	}
	return stdout.Bytes(), nil
}
