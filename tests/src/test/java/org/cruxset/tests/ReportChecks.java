package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.awt.image.BufferedImage;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import javax.imageio.ImageIO;
import javax.xml.parsers.DocumentBuilderFactory;
import org.cruxset.scoring.testing.ExternalTools;
import org.cruxset.search.cli.CruxsetCommand;
import org.cruxset.search.report.Report;
import org.w3c.dom.Document;

/**
 * The report's must-show on a cohort and decoder: a compare of three strategies x two seeds and every other analysis
 * in one folder, then {@code cruxset report}; every table and figure is there, the page renders in a real headless
 * browser without console errors and with content in every figure, and the NIfTI-1 maps read back through an
 * independent reader.
 */
final class ReportChecks {
    /** Figures the report must draw from the analyses run here. */
    static final List<String> FIGURES = List.of("confusion", "fronts", "anytime", "anytime-at-size", "deletion-curve",
            "shapley-networks",
            "shapley-networks-interactions", "scan-regions", "saliency-regions", "audit-topk-0", "audit-topk-1");

    private ReportChecks() {
    }

    static void run(Path cohort, Path model, Path out, Path python, Path chromium) throws Exception {
        String[] m = {"--model", model.toString(), "--cohort", cohort.toString(), "--out", out.toString(),
            "--threads", "2"};
        Cli.run(cat(new String[] {"compare", "--strategies", "grow+prune,genetic~race,local~race", "--seeds", "2",
            "--budget", "300"}, m)).requireSuccess();
        Cli.run(cat(new String[] {"scan", "--units", "regions"}, m)).requireSuccess();
        Cli.run(cat(new String[] {"shapley", "--players", "networks"}, m)).requireSuccess();
        Cli.run(cat(new String[] {"saliency"}, m)).requireSuccess();
        Cli.run(cat(new String[] {"curve", "--ranking", out.resolve("ranking-saliency-regions.tsv").toString(), "--k",
            "1:10", "--null", "10"}, m)).requireSuccess();
        Cli.run(cat(new String[] {"audit", "--ranking", out.resolve("ranking-saliency-regions.tsv").toString(),
            "--ranking", out.resolve("ranking-scan-regions.tsv").toString(), "--random", "20", "--max-k", "6"}, m))
                .requireSuccess();
        for (String t : List.of("compare-runs.tsv", "audit-topk.tsv", "audit-prefix.tsv", "audit-agreement.tsv")) {
            assertTrue(Files.size(out.resolve(t)) > 0, t);
        }
        // The atlas as a label image, written by an independent NIfTI library (Debian's python3-nibabel).
        Path atlas = out.resolve("atlas.nii.gz");
        ExternalTools.runPython(python, out, """
                import sys, csv, numpy as np, nibabel as nib
                idx = [int(r['index']) for r in csv.DictReader(open(sys.argv[1]), delimiter='\\t')]
                rng = np.random.default_rng(3)
                a = np.zeros((14, 12, 10), dtype=np.int16).reshape(-1)
                pos = rng.permutation(a.size)
                for i, l in enumerate(idx):
                    a[pos[i * 6:(i + 1) * 6]] = l
                aff = np.array([[-2.0, 0, 0, 90], [0, 2.0, 0, -126], [0, 0, 2.0, -72], [0, 0, 0, 1]])
                img = nib.Nifti1Image(a.reshape((14, 12, 10)), aff)
                img.header.set_xyzt_units('mm')
                nib.save(img, sys.argv[2])
                """, cohort.resolve("regions.tsv").toString(), atlas.toString());
        CruxsetCommand.Captured r = Cli.run("report", "--out", out.toString(), "--cohort", cohort.toString(), "--atlas-image",
                atlas.toString()).requireSuccess();
        assertTrue(r.out().contains(Report.CAUTION), r.out());
        Path dir = out.resolve("report");
        String html = Files.readString(dir.resolve("report.html"));

        // Every table and figure, and the cautions at the top and at the end.
        assertEquals(2, count(html, Pattern.quote(Report.CAUTION.replace("\"", "&quot;"))), "caution twice");
        for (String section : List.of("data", "critical", "fronts", "anytime", "deletion", "values", "interactions",
                "audit", "maps", "methods", "cautions")) {
            assertTrue(html.contains("<h2 id=\"" + section + "\""), "section " + section);
        }
        assertTrue(count(html, "<table>") >= 6, "tables: intact, critical sets, strategies, tests between strategies, "
                + "audit prefixes and agreement");
        assertEquals(3, count(html, "Wilcoxon signed-rank, 2 pairs"), "three strategies, paired by seed: 3 tests");
        DocumentBuilderFactory xml = DocumentBuilderFactory.newInstance();
        xml.setFeature("http://apache.org/xml/features/nonvalidating/load-external-dtd", false);
        for (String f : FIGURES) {
            assertTrue(html.contains("data-figure=\"" + f + "\""), "figure " + f + " in the page");
            Path svg = dir.resolve("figures").resolve(f + ".svg");
            Document d = xml.newDocumentBuilder().parse(svg.toFile());
            assertEquals("svg", d.getDocumentElement().getNodeName(), svg.toString());
            assertTrue(d.getElementsByTagName("path").getLength() >= 20, svg + " has drawn content");
            BufferedImage png = ImageIO.read(dir.resolve("figures").resolve(f + ".png").toFile());
            assertTrue(png.getWidth() >= 800, f + ".png is print resolution: " + png.getWidth());
            assertTrue(inkFraction(png) > 0.01, f + ".png has content");
        }
        // Self-contained: nothing is fetched (the SVG namespace is a name, not a fetch).
        assertFalse(Pattern.compile("(src|href)=\"(https?:)?//").matcher(html).find(), "no network reference");
        assertFalse(html.contains("<link") || html.contains("<img") || html.contains("@import"), "nothing external");

        // A real browser (Debian's chromium, headless) loads the page: no console message, every figure drawn.
        Path profile = Files.createTempDirectory(out, "browser-profile");
        ExternalTools.Result b = ExternalTools.run(List.of(chromium.toString(), "--headless", "--no-sandbox",
                "--disable-gpu", "--no-first-run", "--user-data-dir=" + profile, "--enable-logging=stderr", "--v=0",
                "--virtual-time-budget=5000", "--dump-dom", dir.resolve("report.html").toUri().toString()), out);
        assertEquals(0, b.exitCode(), b.stderr());
        List<String> console = b.stderr().lines().filter(l -> l.contains(":CONSOLE")).toList();
        assertTrue(console.isEmpty(), "console messages: " + console);
        assertTrue(b.stdout().contains("data-checked=\"yes\""), "the page's load handler ran: " + b.stdout().length());
        Matcher drawn = Pattern.compile("data-figure=\"([^\"]+)\" data-drawn=\"(\\d+)x(\\d+):(\\d+)\"")
                .matcher(b.stdout());
        List<String> seen = new ArrayList<>();
        while (drawn.find()) {
            seen.add(drawn.group(1));
            assertTrue(Integer.parseInt(drawn.group(2)) > 100 && Integer.parseInt(drawn.group(3)) > 100,
                    drawn.group(1) + " has a drawn extent in the browser: " + drawn.group());
            assertTrue(Integer.parseInt(drawn.group(4)) >= 20, drawn.group(1) + " has shapes: " + drawn.group());
        }
        assertTrue(seen.containsAll(FIGURES), "every figure was laid out by the browser: " + seen);
        assertEquals(count(html, "<figure class=\"plot\""), seen.size(), "no figure left undrawn");

        // The maps, read back by nibabel against region-values.tsv and the header specification.
        String check = ExternalTools.runPython(python, out, """
                import sys, csv, glob, gzip, os, numpy as np, nibabel as nib
                atlas = nib.load(sys.argv[1]); lab = np.asarray(atlas.dataobj)
                rows = list(csv.DictReader(open(sys.argv[2]), delimiter='\\t'))
                maps = sorted(glob.glob(os.path.join(sys.argv[3], '*.nii.gz')))
                assert maps, 'no maps'
                for m in maps:
                    img = nib.load(m)
                    with gzip.open(m, 'rb') as f:
                        h = nib.Nifti1Header.from_fileobj(f, check=True)
                    assert int(h['sizeof_hdr']) == 348 and float(h['vox_offset']) == 352.0, m
                    assert h['magic'].tobytes() == b'n+1\\x00', h['magic']
                    assert int(h['datatype']) == 16 and int(h['bitpix']) == 32, h['datatype']
                    assert img.shape == atlas.shape, (img.shape, atlas.shape)
                    assert np.allclose(img.affine, atlas.affine), (img.affine, atlas.affine)
                    data = np.asarray(img.dataobj)
                    measure = os.path.basename(m)[:-len('.nii.gz')]
                    assert np.all(data[lab == 0] == 0), 'background is 0'
                    for r in rows:
                        want = 0.0 if r[measure] == 'NA' else float(r[measure])
                        got = data[lab == int(r['index'])]
                        assert got.size > 0 and np.allclose(got, np.float32(want)), (measure, r['region'], want, got)
                print('maps ok', len(maps))
                """, atlas.toString(), dir.resolve("region-values.tsv").toString(), dir.resolve("maps").toString());
        assertTrue(check.contains("maps ok 3"), "three region measures mapped (membership of the smallest critical "
                + "sets, single-lesion drop, saliency; the Shapley values here are network-level): " + check);
    }

    private static double inkFraction(BufferedImage img) {
        long ink = 0;
        for (int y = 0; y < img.getHeight(); y += 2) {
            for (int x = 0; x < img.getWidth(); x += 2) {
                ink += (img.getRGB(x, y) & 0xFFFFFF) != 0xFFFFFF ? 1 : 0;
            }
        }
        return ink / ((img.getWidth() / 2.0) * (img.getHeight() / 2.0));
    }

    private static int count(String text, String regex) {
        Matcher m = Pattern.compile(regex).matcher(text);
        int n = 0;
        while (m.find()) {
            n++;
        }
        return n;
    }

    private static String[] cat(String[] a, String[] b) {
        String[] out = java.util.Arrays.copyOf(a, a.length + b.length);
        System.arraycopy(b, 0, out, a.length, b.length);
        return out;
    }
}
