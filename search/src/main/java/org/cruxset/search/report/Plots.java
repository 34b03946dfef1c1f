package org.cruxset.search.report;

import java.awt.BasicStroke;
import java.awt.Color;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.knowm.xchart.BitmapEncoder;
import org.knowm.xchart.CategoryChart;
import org.knowm.xchart.CategoryChartBuilder;
import org.knowm.xchart.HeatMapChart;
import org.knowm.xchart.HeatMapChartBuilder;
import org.knowm.xchart.VectorGraphicsEncoder;
import org.knowm.xchart.XYChart;
import org.knowm.xchart.XYChartBuilder;
import org.knowm.xchart.XYSeries;
import org.knowm.xchart.internal.chartpart.Chart;
import org.knowm.xchart.style.AxesChartStyler;
import org.knowm.xchart.style.Styler;
import org.knowm.xchart.style.lines.SeriesLines;
import org.knowm.xchart.style.markers.Marker;
import org.knowm.xchart.style.markers.SeriesMarkers;

/**
 * The report's figures, drawn with XChart: one look for all of them (white background, the Okabe–Ito colour-blind
 * safe palette, and a distinct marker and line style per series so every figure reads in greyscale), saved as SVG
 * and PNG, and inlined into the HTML.
 */
final class Plots {
    /** Okabe & Ito's palette (common practice for colour-blind-safe figures), yellow last: it is faint on white. */
    static final Color[] PALETTE = {new Color(0x0072B2), new Color(0xD55E00), new Color(0x009E73),
        new Color(0xCC79A7), new Color(0xE69F00), new Color(0x56B4E9), new Color(0x000000), new Color(0xF0E442)};
    static final Marker[] MARKERS = {SeriesMarkers.CIRCLE, SeriesMarkers.SQUARE, SeriesMarkers.DIAMOND,
        SeriesMarkers.TRIANGLE_UP, SeriesMarkers.TRIANGLE_DOWN, SeriesMarkers.CROSS, SeriesMarkers.PLUS,
        SeriesMarkers.OVAL};
    static final BasicStroke[] LINES = {SeriesLines.SOLID, SeriesLines.DASH_DASH, SeriesLines.DOT_DOT,
        SeriesLines.DASH_DOT};
    /**
     * A sequential ramp from white to dark blue whose lightness falls monotonically, so heatmaps read in greyscale
     * (cell values are printed too).
     */
    static final Color[] SEQUENTIAL = {new Color(0xF7FBFF), new Color(0xDEEBF7), new Color(0xC6DBEF),
        new Color(0x9ECAE1), new Color(0x6BAED6)};
    /** A diverging ramp (blue, white, vermillion) for signed values; cell values are printed, so sign reads in grey. */
    static final Color[] DIVERGING = {new Color(0x56B4E9), new Color(0xC6E2F5), new Color(0xFFFFFF),
        new Color(0xF9D0B0), new Color(0xF08A4B)};

    static {
        System.setProperty("java.awt.headless", "true");
    }

    /** A drawn figure: its file stem, caption, and the SVG text to inline. */
    record Figure(String name, String caption, String svg) {
    }

    private final Path dir;
    private final List<Figure> figures = new ArrayList<>();

    Plots(Path dir) {
        this.dir = dir;
    }

    List<Figure> figures() {
        return List.copyOf(figures);
    }

    static XYChart xy(String title, String xTitle, String yTitle) {
        XYChart c = new XYChartBuilder().width(760).height(520).title(title).xAxisTitle(xTitle).yAxisTitle(yTitle)
                .build();
        style(c.getStyler());
        c.getStyler().setMarkerSize(7);
        c.getStyler().setLegendLayout(Styler.LegendLayout.Vertical);
        return c;
    }

    static CategoryChart bars(String title, String xTitle, String yTitle, List<String> categories) {
        int labelChars = categories.stream().mapToInt(String::length).sum();
        CategoryChart c = new CategoryChartBuilder().width(Math.max(560, Math.min(1400, 120 + 22 * categories.size())))
                .height(460).title(title).xAxisTitle(xTitle).yAxisTitle(yTitle).build();
        style(c.getStyler());
        c.getStyler().setLegendVisible(false);
        c.getStyler().setXAxisLabelRotation(categories.size() > 8 || labelChars > 50 ? 90 : 0);
        c.getStyler().setErrorBarsColor(Color.BLACK);
        c.getStyler().setAvailableSpaceFill(0.6);
        return c;
    }

    static HeatMapChart heat(String title, String xTitle, String yTitle, int columns, boolean diverging,
                             String valuePattern) {
        int side = Math.max(420, Math.min(1100, 160 + 40 * columns));
        HeatMapChart c = new HeatMapChartBuilder().width(side + 120).height(side).title(title).xAxisTitle(xTitle)
                .yAxisTitle(yTitle).build();
        style(c.getStyler());
        c.getStyler().setRangeColors(diverging ? DIVERGING : SEQUENTIAL);
        c.getStyler().setShowValue(columns <= 16);
        c.getStyler().setValueFont(new java.awt.Font(java.awt.Font.SANS_SERIF, java.awt.Font.PLAIN, columns > 10 ? 10 : 13));
        c.getStyler().setValueFontColor(Color.BLACK);
        c.getStyler().setHeatMapValueDecimalPattern(valuePattern);
        c.getStyler().setXAxisLabelRotation(columns > 4 ? 90 : 0);
        c.getStyler().setLegendVisible(true);
        return c;
    }

    private static void style(Styler s) {
        s.setChartBackgroundColor(Color.WHITE);
        s.setPlotBackgroundColor(Color.WHITE);
        s.setLegendBorderColor(Color.LIGHT_GRAY);
        s.setSeriesColors(PALETTE);
        s.setChartTitleBoxVisible(false);
        s.setLegendPosition(Styler.LegendPosition.OutsideS);
        s.setLegendLayout(Styler.LegendLayout.Horizontal);
        s.setPlotBorderColor(Color.GRAY);
        if (s instanceof AxesChartStyler a) {
            a.setYAxisDecimalPattern("0.###");
            a.setPlotGridLinesColor(new Color(0xDDDDDD));
            a.setAxisTickLabelsColor(Color.BLACK);
        }
    }

    /** Gives series {@code i} its colour, marker and line style. */
    static void look(XYSeries s, int i) {
        s.setLineColor(PALETTE[i % PALETTE.length]);
        s.setMarkerColor(PALETTE[i % PALETTE.length]);
        s.setMarker(MARKERS[i % MARKERS.length]);
        s.setLineStyle(LINES[i % LINES.length]);
    }

    /** A reference line (chance, a limit): grey, no markers, its own dash. */
    static void reference(XYSeries s, boolean dashed) {
        s.setLineColor(Color.DARK_GRAY);
        s.setMarker(SeriesMarkers.NONE);
        s.setLineStyle(dashed ? SeriesLines.DASH_DASH : SeriesLines.DOT_DOT);
    }

    /** Saves {@code chart} as {@code name}.svg and {@code name}.png in the figures folder and keeps it for the page. */
    void add(String name, String caption, Chart<?, ?> chart) {
        try {
            Files.createDirectories(dir);
            Path stem = dir.resolve(name);
            VectorGraphicsEncoder.saveVectorGraphic(chart, stem.toString(), VectorGraphicsEncoder.VectorGraphicsFormat.SVG);
            BitmapEncoder.saveBitmapWithDPI(chart, stem.toString(), BitmapEncoder.BitmapFormat.PNG, 200);
            String svg = Files.readString(dir.resolve(name + ".svg"), StandardCharsets.UTF_8);
            figures.add(new Figure(name, caption, inline(svg, name)));
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write the figure " + dir.resolve(name) + ".svg/.png: "
                    + e.getMessage(), e);
        }
    }

    private static final Pattern ID = Pattern.compile("id=\"([^\"]+)\"");

    /**
     * SVG text ready to sit inside HTML: no XML prolog or DOCTYPE, element ids prefixed with the figure's name (so the
     * clip paths of several figures on one page never collide), and scaling to the page width.
     */
    static String inline(String svg, String name) {
        int start = svg.indexOf("<svg");
        String body = start < 0 ? svg : svg.substring(start);
        String prefix = name.replaceAll("[^A-Za-z0-9]", "-") + "-";
        Matcher m = ID.matcher(body);
        List<String> ids = new ArrayList<>();
        while (m.find()) {
            ids.add(m.group(1));
        }
        for (String id : ids) {
            body = body.replace("id=\"" + id + "\"", "id=\"" + prefix + id + "\"")
                    .replace("url(#" + id + ")", "url(#" + prefix + id + ")")
                    .replace("href=\"#" + id + "\"", "href=\"#" + prefix + id + "\"");
        }
        return body.replaceFirst("<svg ", "<svg role=\"img\" style=\"max-width:100%;height:auto\" ");
    }
}
