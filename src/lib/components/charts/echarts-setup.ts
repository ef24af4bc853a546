/**
 * The ECharts parts Paretherm uses, registered once (tree-shaken: only these end up in the
 * bundle). Every chart goes through EChart.svelte, which imports this module.
 */
import { use, init, graphic } from 'echarts/core';
import { LineChart, ScatterChart, HeatmapChart, CustomChart } from 'echarts/charts';
import {
	GridComponent,
	TooltipComponent,
	LegendComponent,
	DataZoomComponent,
	ToolboxComponent,
	MarkLineComponent,
	MarkAreaComponent,
	VisualMapComponent,
	AxisPointerComponent,
	GraphicComponent
} from 'echarts/components';
import { CanvasRenderer } from 'echarts/renderers';
import { CHROME, FONT_FAMILY, SCENARIO_COLOURS } from './palette';

use([
	LineChart,
	ScatterChart,
	HeatmapChart,
	CustomChart,
	GridComponent,
	TooltipComponent,
	LegendComponent,
	DataZoomComponent,
	ToolboxComponent,
	MarkLineComponent,
	MarkAreaComponent,
	VisualMapComponent,
	AxisPointerComponent,
	GraphicComponent,
	CanvasRenderer
]);

export { init, graphic };

/** Theme object handed to every chart: white ground, dark Manrope text, quiet axes. */
export const CHART_THEME = {
	color: [...SCENARIO_COLOURS],
	backgroundColor: CHROME.background,
	textStyle: { fontFamily: FONT_FAMILY, color: CHROME.text, fontSize: 12 },
	legend: { textStyle: { color: CHROME.text, fontFamily: FONT_FAMILY } },
	tooltip: {
		backgroundColor: '#ffffff',
		borderColor: '#cdd4dd',
		textStyle: { color: CHROME.text, fontFamily: FONT_FAMILY, fontSize: 12 }
	},
	valueAxis: {
		axisLine: { show: true, lineStyle: { color: CHROME.axis } },
		axisTick: { show: true, lineStyle: { color: CHROME.axis } },
		axisLabel: { color: CHROME.text },
		splitLine: { lineStyle: { color: CHROME.grid } },
		nameTextStyle: { color: CHROME.text, fontWeight: 600 }
	},
	categoryAxis: {
		axisLine: { show: true, lineStyle: { color: CHROME.axis } },
		axisTick: { show: true, lineStyle: { color: CHROME.axis } },
		axisLabel: { color: CHROME.text },
		splitLine: { show: false },
		nameTextStyle: { color: CHROME.text, fontWeight: 600 }
	},
	dataZoom: {
		textStyle: { color: CHROME.mutedText },
		borderColor: '#cdd4dd',
		fillerColor: 'rgba(48, 72, 194, 0.10)',
		handleStyle: { color: '#ffffff', borderColor: '#5b687b' },
		moveHandleStyle: { color: '#a7b2c0' },
		dataBackground: { lineStyle: { color: '#a7b2c0' }, areaStyle: { color: '#e6eaef' } }
	}
};
