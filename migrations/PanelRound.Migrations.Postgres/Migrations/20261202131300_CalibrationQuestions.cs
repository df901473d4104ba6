using System;
using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace PanelRound.Migrations.Postgres.Migrations
{
    /// <inheritdoc />
    public partial class CalibrationQuestions : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<bool>(
                name: "IsCalibration",
                table: "Questions",
                type: "boolean",
                nullable: false,
                defaultValue: false);

            migrationBuilder.AddColumn<bool>(
                name: "LogScale",
                table: "Questions",
                type: "boolean",
                nullable: false,
                defaultValue: false);

            migrationBuilder.AddColumn<double>(
                name: "TrueValue",
                table: "Questions",
                type: "double precision",
                nullable: true);

            migrationBuilder.AddColumn<DateTime>(
                name: "TrueValueRecordedAt",
                table: "Questions",
                type: "timestamp with time zone",
                nullable: true);

            migrationBuilder.AddColumn<double>(
                name: "Settings_CalibrationCutoff",
                table: "Panels",
                type: "double precision",
                nullable: true);

            migrationBuilder.AddColumn<double>(
                name: "Settings_CalibrationOvershoot",
                table: "Panels",
                type: "double precision",
                nullable: false,
                // Existing panels get the documented 10% overshoot, not 0.
                defaultValue: 0.10);

            migrationBuilder.AddColumn<bool>(
                name: "Settings_CalibrationUsesFirstRound",
                table: "Panels",
                type: "boolean",
                nullable: false,
                defaultValue: false);
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropColumn(
                name: "IsCalibration",
                table: "Questions");

            migrationBuilder.DropColumn(
                name: "LogScale",
                table: "Questions");

            migrationBuilder.DropColumn(
                name: "TrueValue",
                table: "Questions");

            migrationBuilder.DropColumn(
                name: "TrueValueRecordedAt",
                table: "Questions");

            migrationBuilder.DropColumn(
                name: "Settings_CalibrationCutoff",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "Settings_CalibrationOvershoot",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "Settings_CalibrationUsesFirstRound",
                table: "Panels");
        }
    }
}
